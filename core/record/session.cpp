// The recording session state machine (see session.hpp for the lines it understands).
//
// Invariants:
//  - nothing reaches the sink unless it was validated against the trait's kind and range;
//  - a message of severity Refused means nothing was written;
//  - when a trait already has a current value on this plot, a new value supersedes it (the old row stays
//    in the history), so a re-visit never leaves two competing current values from one device;
//  - blind trials never put a treatment label into any message or card.
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

constexpr const char* kHelp =
    "scan a tag or type its code to open a plot; then answer each trait (empty line: leave it)\n"
    "/skip  leave this plot   /flag damaged|missing REASON   /fix [REASON] re-enter the last value\n"
    "/next  where to go next  /missing  plots of this block without records   /quit  end the session";

}  // namespace

RecordingSession::RecordingSession(const TrialSpec& spec, const Layout& layout, RecordSink& sink,
                                   RecorderIdentity who, Clock clock, std::set<int> done_plots)
    : spec_(spec), layout_(layout), sink_(sink), who_(std::move(who)), clock_(std::move(clock)),
      done_(std::move(done_plots)) {
    for (std::size_t i = 0; i < layout_.plots.size(); ++i) by_id_[layout_.plots[i].id] = i;
}

const PlotPlacement* RecordingSession::open_plot() const { return plot_; }

std::optional<std::size_t> RecordingSession::asking_trait() const { return trait_; }

std::string RecordingSession::treatment_shown(const PlotPlacement& p) const {
    if (spec_.blind) return "(blind)";
    return spec_.treatments.at(static_cast<std::size_t>(p.treatment)).label;
}

const PlotPlacement* RecordingSession::next_in_walk() const {
    for (const auto& p : layout_.plots)
        if (!done_.count(p.id) && (!plot_ || p.id != plot_->id)) return &p;
    return nullptr;
}

std::vector<int> RecordingSession::missing_in_block(int block) const {
    std::vector<int> ids;
    for (const auto& p : layout_.plots)
        if (p.block == block && !done_.count(p.id)) ids.push_back(p.id);
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
        if (r.obs.trait == trait) v = r.obs.value;
    return v;
}

std::vector<std::string> RecordingSession::plot_card() const {
    std::vector<std::string> lines;
    if (!plot_) return lines;
    const auto& p = *plot_;
    lines.push_back(fmt::format("plot {}  block {}  row {} col {}", p.id, p.block, p.row, p.col));
    lines.push_back(fmt::format("treatment: {}", treatment_shown(p)));
    for (const auto& t : spec_.traits)
        if (auto v = current_value(p.id, t.name))
            lines.push_back(fmt::format("  {} = {}{}{}", t.name, *v, t.unit.empty() ? "" : " ", t.unit));
    return lines;
}

std::string RecordingSession::prompt() const {
    if (finished_) return "";
    if (!plot_ || !trait_) return "scan or type plot code";
    const auto& t = spec_.traits[*trait_];
    std::string p = fmt::format("{} ({})", t.name, describe_trait(t));
    if (pending_) return "correct " + p + fmt::format(" [was {}]", last_ ? last_->value : "");
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
    std::int64_t id = sink_.add_observation(obs);  // committed when this returns

    done_.insert(plot_->id);
    plot_current_.erase(std::remove_if(plot_current_.begin(), plot_current_.end(),
                                       [&](const ObservationRecord& r) {
                                           return obs.supersedes && r.id == *obs.supersedes;
                                       }),
                        plot_current_.end());
    plot_current_.push_back({id, obs});
    last_ = Confirmed{id, plot_->id, *trait_, v.text};
    out.push_back(info(fmt::format("saved {} = {}{}{}{}", t.name, v.text, t.unit.empty() ? "" : " ", t.unit,
                                   obs.supersedes ? " (earlier value kept in history)" : "")));
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

    if (w == "help") return {info(kHelp)};
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
    if (w == "flag") {
        if (!plot_) return {refuse("no plot is open; scan a tag first")};
        std::string_view st = arg.substr(0, arg.find(' '));
        std::string_view reason = st.size() < arg.size() ? trim(arg.substr(st.size())) : std::string_view{};
        std::string s(st);
        std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
        auto state = plot_state_from_string(s);
        if (!state || *state == PlotState::Normal)
            return {refuse("flag what? write /flag damaged REASON or /flag missing REASON")};
        if (reason.empty()) return {refuse(fmt::format("/flag {} needs a reason, e.g. /flag {} hail", s, s))};
        PlotEvent ev;
        ev.plot = plot_->id;
        ev.state = *state;
        ev.reason = std::string(reason);
        ev.recorded_utc = clock_();
        ev.device = who_.device;
        ev.observer = who_.observer;
        sink_.add_plot_event(ev);
        done_.insert(plot_->id);
        std::vector<Message> out{info(fmt::format("plot {} flagged {}: {}", plot_->id, s, reason))};
        if (*state == PlotState::Missing) {
            auto closed = close_plot("closed");
            out.insert(out.end(), closed.begin(), closed.end());
        }
        return out;
    }
    if (w == "fix") {
        if (!last_) return {refuse("nothing has been saved in this session yet")};
        std::vector<Message> out;
        std::optional<std::size_t> resume;
        if (plot_ && plot_->id == last_->plot) {
            resume = trait_;
        } else {
            if (plot_) out = close_plot("left for a correction");
            auto opened = open(last_->plot, false);
            out.insert(out.end(), opened.begin(), opened.end());
        }
        pending_ = Pending{last_->id, last_->plot, last_->trait,
                           arg.empty() ? std::string("corrected at entry") : "corrected: " + std::string(arg),
                           resume};
        trait_ = last_->trait;
        out.push_back(info(fmt::format("correcting {} of plot {} (was {}); empty line keeps it",
                                       spec_.traits[last_->trait].name, last_->plot, last_->value)));
        return out;
    }
    return {refuse(fmt::format("unknown command /{}; /help lists them", word))};
}

}  // namespace pw
