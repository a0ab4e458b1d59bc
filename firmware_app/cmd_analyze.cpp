// `plotwright analyze`: the ANOVA of one trait by the trial's design, from the trial database or from any
// CSV (legacy spreadsheets). Text for people, --json for scripts (keys in docs/analysis.md).
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <charconv>
#include <cmath>
#include <iostream>
#include <map>

#include "core/error.hpp"
#include "core/stats/anova.hpp"
#include "firmware_app/app.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

struct Options {
    std::string db, trait, csv, design = "rcbd", block, treatment, response, out;
    bool json = false;
};

// What the analysis is of, for the heading and the JSON.
struct Subject {
    std::string source;      // trial code or CSV file
    std::string trait;
    std::string unit;
    std::vector<std::string> notes;  // flagged plots, merged duplicates
    std::map<std::pair<std::string, std::string>, std::string> missing_why;  // (block, treatment) -> reason
};

std::string num(double v) {
    if (v != 0 && (std::fabs(v) >= 1e7 || std::fabs(v) < 1e-3)) return fmt::format("{:.6g}", v);
    return fmt::format("{:.4f}", v);
}

std::string render_text(const Subject& s, const RcbdResult& r) {
    std::string o = fmt::format("{} - {}{}: RCBD, {} treatments x {} blocks\n\n", s.source, s.trait,
                                s.unit.empty() ? "" : " (" + s.unit + ")", r.treatments, r.blocks);
    o += fmt::format("{:<10} {:>4} {:>14} {:>14} {:>10} {:>10}\n", "source", "df", "SS", "MS", "F", "p");
    for (const auto& row : r.anova)
        o += fmt::format("{:<10} {:>4} {:>14} {:>14} {:>10} {:>10}\n", row.source, row.df, num(row.ss),
                         row.source == "total" ? "" : num(row.ms), row.f ? fmt::format("{:.3f}", *row.f) : "",
                         row.p ? fmt::format("{:.4g}", *row.p) : "");
    o += fmt::format("\ngrand mean {}   CV {:.2f}%   SED {}   LSD (5%) {}\n\n", num(r.grand_mean), r.cv_percent,
                     num(r.sed), num(r.lsd_5pct));
    o += fmt::format("{:<24} {:>12} {:>4}\n", "treatment", "mean", "n");
    for (const auto& m : r.means) o += fmt::format("{:<24} {:>12} {:>4}\n", m.treatment, num(m.mean), m.n);
    for (const auto& e : r.estimated) {
        auto why = s.missing_why.find({e.block, e.treatment});
        o += fmt::format("\nmissing: block {}, treatment {}{}; estimated as {} (Yates), residual df reduced by 1",
                         e.block, e.treatment, why == s.missing_why.end() ? "" : " (" + why->second + ")",
                         num(e.estimate));
    }
    if (!r.estimated.empty()) o += "\n";
    for (const auto& n : s.notes) o += "note: " + n + "\n";
    return o;
}

std::string render_json(const Subject& s, const RcbdResult& r) {
    auto opt = [](const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); };
    nlohmann::json j;
    j["source"] = s.source;
    j["trait"] = s.trait;
    j["unit"] = s.unit;
    j["design"] = "rcbd";
    j["anova"] = nlohmann::json::array();
    for (const auto& row : r.anova)
        j["anova"].push_back({{"source", row.source}, {"df", row.df}, {"ss", row.ss}, {"ms", row.ms},
                              {"f", opt(row.f)}, {"p", opt(row.p)}});
    j["grand_mean"] = r.grand_mean;
    j["cv_percent"] = r.cv_percent;
    j["sed"] = r.sed;
    j["lsd_5pct"] = r.lsd_5pct;
    j["blocks"] = r.blocks;
    j["treatments"] = r.treatments;
    j["means"] = nlohmann::json::array();
    for (const auto& m : r.means) j["means"].push_back({{"treatment", m.treatment}, {"mean", m.mean}, {"n", m.n}});
    j["missing"] = nlohmann::json::array();
    for (const auto& e : r.estimated) {
        auto why = s.missing_why.find({e.block, e.treatment});
        j["missing"].push_back({{"block", e.block}, {"treatment", e.treatment}, {"estimate", e.estimate},
                                {"reason", why == s.missing_why.end() ? "" : why->second}});
    }
    j["notes"] = s.notes;
    return j.dump(2) + "\n";
}

std::vector<RcbdObservation> from_store(const Store& store, const std::string& trait_name, Subject& s) {
    const StoredTrial& t = store.trial();
    const TraitSpec* trait = nullptr;
    for (const auto& tr : t.spec.traits)
        if (tr.name == trait_name) trait = &tr;
    if (!trait) {
        std::string names;
        for (const auto& tr : t.spec.traits) names += (names.empty() ? "" : ", ") + tr.name;
        throw InputError(fmt::format("--trait {}: trial {} has no such trait (it has: {})", trait_name,
                                     t.spec.code, names));
    }
    if (trait->kind == TraitKind::Date || trait->kind == TraitKind::Text)
        throw InputError(fmt::format("--trait {}: a {} trait has no ANOVA; choose a number, count or score",
                                     trait_name, to_string(trait->kind)));
    if (t.spec.design != "rcbd")
        throw InputError(fmt::format(
            "trial {}: the {} design cannot be analysed yet: `plotwright analyze` handles randomized complete "
            "block designs (rcbd) only; `plotwright export` writes the observations, and `plotwright plots` the "
            "design's columns, for analysis elsewhere",
            t.spec.code, t.spec.design));
    s.source = "trial " + t.spec.code;
    s.trait = trait->name;
    s.unit = trait->unit;

    // The newest current value per plot; several current values exist only after a merge of devices.
    std::map<int, const ObservationRow*> latest;
    auto rows = store.current_observations();
    for (const auto& row : rows) {
        if (row.record.obs.trait != trait_name || !row.record.obs.number) continue;
        auto [it, fresh] = latest.emplace(row.record.obs.plot, &row);
        if (!fresh) {
            s.notes.push_back(fmt::format("plot {} has several current values; the newest is used",
                                          row.record.obs.plot));
            if (row.record.id > it->second->record.id) it->second = &row;
        }
    }
    std::map<int, std::string> flags;
    for (const auto& ev : store.plot_events())
        flags[ev.plot] = fmt::format("flagged {}: {}", to_string(ev.state), ev.reason);

    // Treatments in spec order, blocks in number order, so the tables read in the spec's order.
    std::vector<const PlotPlacement*> order;
    for (const auto& p : t.layout.plots) order.push_back(&p);
    std::stable_sort(order.begin(), order.end(), [](auto* a, auto* b) {
        return a->treatment != b->treatment ? a->treatment < b->treatment : a->block < b->block;
    });
    std::vector<RcbdObservation> data;
    for (const PlotPlacement* p : order) {
        std::string block = std::to_string(p->block);
        const std::string& trt = t.spec.treatments.at(static_cast<std::size_t>(p->treatment)).label;
        auto flag = flags.find(p->id);
        auto it = latest.find(p->id);
        if (it == latest.end()) {
            s.missing_why[{block, trt}] =
                fmt::format("plot {}{}", p->id, flag == flags.end() ? ": no value recorded" : ": " + flag->second);
            data.push_back({block, trt, std::nan("")});  // a known cell without a value (anova.hpp)
            continue;
        }
        if (flag != flags.end()) s.notes.push_back(fmt::format("plot {} {}; its value is used", p->id, flag->second));
        data.push_back({block, trt, *it->second->record.obs.number});
    }
    return data;
}

std::vector<RcbdObservation> from_csv(const Options& o, Subject& s) {
    for (auto [flag, value] : {std::pair{"--block", &o.block}, {"--treatment", &o.treatment}, {"--response", &o.response}})
        if (value->empty()) throw InputError(fmt::format("--csv needs {} COLUMN", flag));
    CsvTable table = parse_csv(read_text_file(o.csv), o.csv);
    std::size_t cb = table.column(o.block, o.csv), ct = table.column(o.treatment, o.csv),
                cr = table.column(o.response, o.csv);
    s.source = o.csv;
    s.trait = o.response;
    std::vector<RcbdObservation> data;
    for (std::size_t i = 0; i < table.rows.size(); ++i) {
        const auto& row = table.rows[i];
        const std::string& cell = row[cr];
        if (cell.empty() || cell == "NA") {  // an empty cell (or R's NA) is a missing plot
            s.missing_why[{row[cb], row[ct]}] = fmt::format("{} record {}: empty", o.csv, i + 1);
            data.push_back({row[cb], row[ct], std::nan("")});
            continue;
        }
        double y = 0;
        auto [end, ec] = std::from_chars(cell.data(), cell.data() + cell.size(), y);
        if (ec != std::errc() || end != cell.data() + cell.size() || !std::isfinite(y))
            throw InputError(fmt::format("{}: record {} (after the header), column {}: '{}' is not a number",
                                         o.csv, i + 1, o.response, cell));
        data.push_back({row[cb], row[ct], y});
    }
    return data;
}

}  // namespace

std::string analyze_trait(const Store& store, const std::string& trait, bool json) {
    Subject s;
    RcbdResult r = analyze_rcbd(from_store(store, trait, s));
    return json ? render_json(s, r) : render_text(s, r);
}

void add_analyze_command(CLI::App& app) {
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("analyze", "ANOVA of one trait: block and treatment effects, CV, means, LSD");
    auto* db = cmd->add_option("--db", o->db, "Trial database")->check(CLI::ExistingFile);
    cmd->add_option("--trait", o->trait, "Trait to analyse (with --db)");
    auto* csv = cmd->add_option("--csv", o->csv, "Analyse a CSV file instead of a trial database")
                    ->check(CLI::ExistingFile);
    db->excludes(csv);
    cmd->add_option("--design", o->design, "Design of the CSV data")->check(CLI::IsMember({"rcbd"}));
    cmd->add_option("--block", o->block, "CSV column holding the block");
    cmd->add_option("--treatment", o->treatment, "CSV column holding the treatment");
    cmd->add_option("--response", o->response, "CSV column holding the measured value");
    cmd->add_flag("--json", o->json, "Print the results as JSON");
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->callback([o] {
        if (!o->db.empty()) {
            if (o->trait.empty()) throw InputError("--db needs --trait NAME");
            emit(o->out, analyze_trait(Store::open(o->db), o->trait, o->json));
            return;
        }
        if (o->csv.empty())
            throw InputError("give --db FILE --trait NAME, or --csv FILE with --block, --treatment, --response");
        Subject s;
        RcbdResult r = analyze_rcbd(from_csv(*o, s));
        emit(o->out, o->json ? render_json(s, r) : render_text(s, r));
    });
}

}  // namespace pw::app
