// The recording session state machine (see session.hpp for the lines it understands).
//
// Invariants:
//  - nothing reaches the sink unless it was validated against the trait's kind and range;
//  - a message of severity Refused means nothing was written;
//  - when a trait already has a current value on this plot, a new value supersedes it (the old row stays
//    in the history), so a re-visit never leaves two competing current values from one device;
//  - blind trials never put a treatment label into any message or card;
//  - undo walks back through this session's confirmations only (confirmed_ is the stack), and writes
//    a new row that supersedes the newest row of that plot and trait (head_), so the history keeps the
//    undone value and each plot and trait stays one chain of corrections;
//  - a withdrawal (empty value) is never shown as a value: current_value() skips it, current_id() does
//    not, so the next value supersedes it.
#include "core/record/session.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>

#include "core/error.hpp"
#include "core/tags/payload.hpp"
#include "core/traits/value.hpp"

namespace pw {
namespace {

std::string_view trim(std::string_view s) {
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
    return s;
}

bool has_scan_prefix(std::string_view s) {
    if (s.size() < kTagPrefix.size()) return false;
    for (std::size_t i = 0; i < kTagPrefix.size(); ++i)
        if (std::toupper(static_cast<unsigned char>(s[i])) != kTagPrefix[i]) return false;
    return true;
}

std::string join_ids(const std::vector<int>& ids, std::size_t most) {
    std::string out;
    for (std::size_t i = 0; i < ids.size() && i < most; ++i) out += (i ? ", " : "") + std::to_string(ids[i]);
    if (ids.size() > most) out += fmt::format(" and {} more", ids.size() - most);
    return out;
}

Message info(std::string t) { return {Severity::Info, std::move(t)}; }
Message warn(std::string t) { return {Severity::Warning, std::move(t)}; }
Message refuse(std::string t) { return {Severity::Refused, std::move(t)}; }

std::string flag_names(const std::vector<FlagSpec>& flags) {
    std::string out;
    for (const auto& f : flags) out += (out.empty() ? "" : ", ") + f.name;
    return out;
}

std::string help_text(const TrialSpec& spec) {
    return fmt::format(
        "scan a tag or type its code to open a plot; then answer each trait (empty line: leave it)\n"
        "/skip  leave this plot   /flag NAME NOTE  flag the plot ({})\n"
        "/fix [REASON]  re-enter the last value   /undo  take back the last value\n"
        "/next  where to go next  /missing  plots of this block without records   /quit  end the session",
        flag_names(spec.flags));
}

std::string with_unit(const std::string& value, const TraitSpec& t) {
    return value + (t.unit.empty() ? "" : " " + t.unit);
}

}  // namespace

RecordingSession::RecordingSession(const TrialSpec& spec, const Layout& layout, RecordSink& sink,
                                   RecorderIdentity who, Clock clock, std::set<int> done_plots)
    : spec_(spec), layout_(layout), sink_(sink), who_(std::move(who)), clock_(std::move(clock)),
      done_(std::move(done_plots)) {
    for (std::size_t i = 0; i < layout_.plots.size(); ++i) {
        const PlotPlacement& p = layout_.plots[i];
        by_id_[p.id] = i;
        by_block_[p.block].push_back(i);
        if (!done_.count(p.id)) not_done_.insert(i);
    }
}

void RecordingSession::mark_done(int plot_id) {
    done_.insert(plot_id);
    not_done_.erase(by_id_.at(plot_id));
}

void RecordingSession::mark_not_done(int plot_id) {
    done_.erase(plot_id);
    not_done_.insert(by_id_.at(plot_id));
}

const PlotPlacement* RecordingSession::open_plot() const { return plot_; }

std::optional<std::size_t> RecordingSession::asking_trait() const { return trait_; }

std::string RecordingSession::treatment_shown(const PlotPlacement& p) const {
    if (spec_.blind) return "(blind)";
    return spec_.treatments.at(static_cast<std::size_t>(p.treatment)).label;
}

const PlotPlacement* RecordingSession::next_in_walk() const {
    for (std::size_t i : not_done_)  // at most two steps: the open plot is skipped
        if (!plot_ || layout_.plots[i].id != plot_->id) return &layout_.plots[i];
    return nullptr;
}

std::vector<int> RecordingSession::missing_in_block(int block) const {
    std::vector<int> ids;
    const auto it = by_block_.find(block);
    if (it == by_block_.end()) return ids;
    for (std::size_t i : it->second)
        if (!done_.count(layout_.plots[i].id)) ids.push_back(layout_.plots[i].id);
    return ids;
}

std::optional<std::int64_t> RecordingSession::current_id(int plot, const std::string& trait) const {
    if (!plot_ || plot_->id != plot) return std::nullopt;
    std::optional<std::int64_t> id;
    for (const auto& r : plot_current_)  // the newest current row wins when a station merged several
        if (r.obs.trait == trait) id = r.id;
    return id;
}

std::optional<std::string> RecordingSession::current_value(int plot, const std::string& trait) const {
    if (!plot_ || plot_->id != plot) return std::nullopt;
    std::optional<std::string> v;
    for (const auto& r : plot_current_)
        if (r.obs.trait == trait) v = is_withdrawal(r.obs) ? std::nullopt : std::optional<std::string>(r.obs.value);
    return v;
}

bool RecordingSession::has_records(int plot) const {
    for (const auto& r : sink_.current_for_plot(plot))
        if (!is_withdrawal(r.obs)) return true;
    return !sink_.events_for_plot(plot).empty();
}

std::vector<std::string> RecordingSession::plot_card() const {
    std::vector<std::string> lines;
    if (!plot_) return lines;
    const auto& p = *plot_;
    lines.push_back(fmt::format("plot {}  block {}  row {} col {}", p.id, p.block, p.row, p.col));
    lines.push_back(fmt::format("treatment: {}", treatment_shown(p)));
    for (const auto& t : spec_.traits)
        if (auto v = current_value(p.id, t.name))
            lines.push_back(fmt::format("  {} = {}", t.name, with_unit(*v, t)));
    for (const auto& ev : plot_flags_) {
        std::string label = ev.flag;
        for (const auto& f : spec_.flags)
            if (f.name == ev.flag) label = f.label;
        lines.push_back(fmt::format("flagged {}: {}", label, ev.reason));
    }
    return lines;
}

std::string RecordingSession::prompt() const {
    if (finished_) return "";
    if (!plot_ || !trait_) return "scan or type plot code";
    const auto& t = spec_.traits[*trait_];
    std::string p = fmt::format("{} ({})", t.name, describe_trait(t));
    if (pending_) return "correct " + p + fmt::format(" [was {}]", confirmed_.empty() ? "" : confirmed_.back().value);
    if (auto v = current_value(plot_->id, t.name)) p += fmt::format(" [was {}]", *v);
    return p;
}

std::string RecordingSession::next_hint() const {
    const PlotPlacement* n = next_in_walk();
    if (!n) return "nothing left to record";
    return fmt::format("next: plot {} (block {})", n->id, n->block);
}

std::vector<Message> RecordingSession::handle(std::string_view raw) {
    if (finished_) return {refuse("the session has ended")};
    std::string_view line = trim(raw);
    try {
        if (!line.empty() && line.front() == '/') return command(line);
        // A scan always selects a plot, even in the middle of trait entry: a code must never land in a
        // value field (the prefix tells a scan from typing).
        if (has_scan_prefix(line) || !plot_ || !trait_) {
            if (line.empty()) return {info(next_hint())};
            PlotCode code = parse_plot_code(line);
            if (code.trial != spec_.code)
                return {refuse(fmt::format("tag of trial {}, but this is trial {}: nothing recorded",
                                           code.trial, spec_.code))};
            if (!by_id_.count(code.plot))
                return {refuse(fmt::format("trial {} has no plot {}: nothing recorded", spec_.code, code.plot))};
            return open(code.plot, code.scanned);
        }
        return take_value(line);
    } catch (const InputError& e) {
        return {refuse(e.what())};
    } catch (const Error& e) {  // the store refused: nothing was written
        return {refuse(std::string("not saved: ") + e.what())};
    }
}

std::vector<Message> RecordingSession::open(int plot_id, bool /*scanned*/) {
    std::vector<Message> out;
    if (plot_ && trait_) out.push_back(info(fmt::format("plot {} left with traits unrecorded", plot_->id)));
    pending_.reset();
    const PlotPlacement& p = layout_.plots[by_id_.at(plot_id)];
    if (last_block_ != 0 && p.block != last_block_) {
        auto left = missing_in_block(last_block_);
        left.erase(std::remove(left.begin(), left.end(), plot_id), left.end());
        if (!left.empty())
            out.push_back(warn(fmt::format("block {} is not finished: plots {} have no records", last_block_,
                                           join_ids(left, 8))));
    }
    plot_ = &p;
    last_block_ = p.block;
    plot_current_ = sink_.current_for_plot(p.id);
    plot_flags_ = sink_.events_for_plot(p.id);
    if (done_.count(p.id))
        out.push_back(warn(fmt::format("plot {} already has records; a new value replaces the shown one, "
                                       "which stays in the history", p.id)));
    for (auto& l : plot_card()) out.push_back({Severity::Info, l, true});
    trait_.reset();
    if (spec_.traits.empty()) return out;
    trait_ = 0;
    return out;
}

void RecordingSession::advance_trait(std::vector<Message>& out) {
    if (!trait_) return;
    if (*trait_ + 1 < spec_.traits.size()) {
        ++*trait_;
        return;
    }
    auto closed = close_plot("done");
    out.insert(out.end(), closed.begin(), closed.end());
}

std::vector<Message> RecordingSession::close_plot(const char* why) {
    std::vector<Message> out;
    if (!plot_) return out;
    out.push_back(info(fmt::format("plot {} {}; {} of {} plots have records; {}", plot_->id, why, plots_done(),
                                   plots_total(), next_hint())));
    plot_ = nullptr;
    trait_.reset();
    plot_current_.clear();
    plot_flags_.clear();
    return out;
}

std::vector<Message> RecordingSession::take_value(std::string_view line) {
    std::vector<Message> out;
    const TraitSpec& t = spec_.traits[*trait_];
    if (line.empty()) {
        if (pending_) {
            out.push_back(info("correction cancelled; the value stands"));
            trait_ = pending_->resume;
            pending_.reset();
            if (!trait_) {
                auto closed = close_plot("done");
                out.insert(out.end(), closed.begin(), closed.end());
            }
            return out;
        }
        out.push_back(info(fmt::format("{} left unrecorded", t.name)));
        advance_trait(out);
        return out;
    }
    TraitValue v = parse_trait_value(t, line);  // throws InputError: nothing written

    NewObservation obs;
    obs.plot = plot_->id;
    obs.trait = t.name;
    obs.value = v.text;
    obs.number = v.number;
    obs.recorded_utc = clock_();
    obs.device = who_.device;
    obs.observer = who_.observer;
    if (pending_) {
        obs.supersedes = pending_->supersedes;
        obs.note = pending_->note;
    } else if (auto prev = current_id(plot_->id, t.name)) {
        obs.supersedes = *prev;
        obs.note = "replaced on a later visit";
    }
    std::optional<NewObservation> before;  // what this value replaces, for undo
    for (const auto& r : plot_current_)
        if (obs.supersedes && r.id == *obs.supersedes) before = r.obs;
    if (!pending_ && before && before->note.rfind("undone", 0) == 0) obs.note = "entered again after an undo";
    std::int64_t id = sink_.add_observation(obs);  // committed when this returns

    mark_done(plot_->id);
    plot_current_.erase(std::remove_if(plot_current_.begin(), plot_current_.end(),
                                       [&](const ObservationRecord& r) {
                                           return obs.supersedes && r.id == *obs.supersedes;
                                       }),
                        plot_current_.end());
    plot_current_.push_back({id, obs});
    head_[{plot_->id, *trait_}] = id;
    confirmed_.push_back(Confirmed{id, plot_->id, *trait_, v.text, before});
    out.push_back(info(fmt::format("saved {} = {}{}", t.name, with_unit(v.text, t),
                                   before && !is_withdrawal(*before) ? " (earlier value kept in history)" : "")));
    if (pending_) {
        trait_ = pending_->resume;
        pending_.reset();
        if (!trait_) {
            auto closed = close_plot("done");
            out.insert(out.end(), closed.begin(), closed.end());
        }
        return out;
    }
    advance_trait(out);
    return out;
}

std::vector<Message> RecordingSession::command(std::string_view line) {
    std::string_view rest = line.substr(1);
    std::string_view word = rest.substr(0, rest.find(' '));
    std::string_view arg = word.size() < rest.size() ? trim(rest.substr(word.size())) : std::string_view{};
    std::string w(word);
    std::transform(w.begin(), w.end(), w.begin(), [](unsigned char c) { return std::tolower(c); });

    if (w == "help") return {info(help_text(spec_))};
    if (w == "quit") {
        finished_ = true;
        return {info(fmt::format("session ended; {} of {} plots have records", plots_done(), plots_total()))};
    }
    if (w == "next") return {info(next_hint())};
    if (w == "missing") {
        int block = plot_ ? plot_->block : last_block_;
        if (block == 0) {
            const PlotPlacement* n = next_in_walk();
            block = n ? n->block : 0;
        }
        if (block == 0) return {info("every plot has records")};
        auto ids = missing_in_block(block);
        if (ids.empty()) return {info(fmt::format("block {}: every plot has records", block))};
        return {info(fmt::format("block {} without records: {}", block, join_ids(ids, 50)))};
    }
    if (w == "skip") {
        if (!plot_) return {refuse("no plot is open; scan a tag first")};
        pending_.reset();
        return close_plot("skipped");
    }
    if (w == "flag") return flag(arg);
    if (w == "undo") return undo();
    if (w == "fix") {
        if (confirmed_.empty())
            return {refuse(undone_ ? "no value saved in this session is left to correct (all were undone)"
                                   : "nothing has been saved in this session yet")};
        const Confirmed last = confirmed_.back();
        std::vector<Message> out;
        std::optional<std::size_t> resume;
        if (plot_ && plot_->id == last.plot) {
            resume = trait_;
        } else {
            if (plot_) out = close_plot("left for a correction");
            auto opened = open(last.plot, false);
            out.insert(out.end(), opened.begin(), opened.end());
        }
        pending_ = Pending{head_.at({last.plot, last.trait}), last.plot, last.trait,
                           arg.empty() ? std::string("corrected at entry") : "corrected: " + std::string(arg),
                           resume};
        trait_ = last.trait;
        out.push_back(info(fmt::format("correcting {} of plot {} (was {}); empty line keeps it",
                                       spec_.traits[last.trait].name, last.plot, last.value)));
        return out;
    }
    return {refuse(fmt::format("unknown command /{}; /help lists them", word))};
}

std::vector<Message> RecordingSession::flag(std::string_view arg) {
    if (!plot_) return {refuse("no plot is open; scan a tag first")};
    std::string_view word = arg.substr(0, arg.find(' '));
    std::string_view note = word.size() < arg.size() ? trim(arg.substr(word.size())) : std::string_view{};
    std::string name(word);
    std::transform(name.begin(), name.end(), name.begin(), [](unsigned char c) { return std::tolower(c); });
    auto f = std::find_if(spec_.flags.begin(), spec_.flags.end(), [&](const FlagSpec& x) { return x.name == name; });
    if (f == spec_.flags.end())
        return {refuse(fmt::format("flag what? write /flag NAME NOTE with NAME one of {}", flag_names(spec_.flags)))};
    if (note.empty()) return {refuse(fmt::format("/flag {} needs a note, e.g. /flag {} hail", name, name))};
    PlotEvent ev;
    ev.plot = plot_->id;
    ev.state = f->missing ? PlotState::Missing : PlotState::Damaged;
    ev.reason = std::string(note);
    ev.recorded_utc = clock_();
    ev.device = who_.device;
    ev.observer = who_.observer;
    ev.flag = f->name;
    sink_.add_plot_event(ev);  // committed when this returns
    mark_done(plot_->id);
    plot_flags_.push_back(ev);
    std::vector<Message> out{info(fmt::format("plot {} flagged {}: {}{}", plot_->id, f->name, note,
                                              f->missing ? " (its values count as missing)" : ""))};
    if (f->missing) {
        pending_.reset();
        auto closed = close_plot("closed");
        out.insert(out.end(), closed.begin(), closed.end());
    }
    return out;
}

// Brings the session to `plot` asking `trait`: the same plot stays open (its values read again), another
// open plot is left.
std::vector<Message> RecordingSession::go_to(int plot, std::size_t trait, const char* why) {
    std::vector<Message> out;
    if (plot_ && plot_->id == plot) {
        plot_current_ = sink_.current_for_plot(plot);
    } else {
        if (plot_) out = close_plot(why);
        auto opened = open(plot, false);
        out.insert(out.end(), opened.begin(), opened.end());
    }
    trait_ = trait;
    return out;
}

std::vector<Message> RecordingSession::undo() {
    if (confirmed_.empty())
        return {refuse(undone_ ? "nothing left to undo: every value saved in this session has been taken back"
                               : "nothing to undo: no value has been saved in this session")};
    pending_.reset();
    const Confirmed e = confirmed_.back();
    const TraitSpec& t = spec_.traits[e.trait];
    const bool to_value = e.before && !is_withdrawal(*e.before);
    NewObservation obs;
    obs.plot = e.plot;
    obs.trait = t.name;
    if (to_value) {
        obs.value = e.before->value;
        obs.number = e.before->number;
        obs.note = "undone: back to " + obs.value;
    } else {
        obs.note = "undone: no value";  // a withdrawal: empty value, no number
    }
    obs.recorded_utc = clock_();
    obs.device = who_.device;
    obs.observer = who_.observer;
    obs.supersedes = head_.at({e.plot, e.trait});
    const std::int64_t id = sink_.add_observation(obs);  // committed when this returns
    head_[{e.plot, e.trait}] = id;
    confirmed_.pop_back();
    ++undone_;
    if (!has_records(e.plot)) mark_not_done(e.plot);

    std::vector<Message> out = go_to(e.plot, e.trait, "left for an undo");
    out.push_back(info(fmt::format("undone: plot {} {} back to {}; {}", e.plot, t.name,
                                   to_value ? with_unit(obs.value, t) : std::string("no value"),
                                   confirmed_.empty() ? "nothing more to undo"
                                                      : fmt::format("{} more to undo", confirmed_.size()))));
    return out;
}

}  // namespace pw
