// `plotwright analyze`: the analysis of variance of one trait by the trial's design, from the trial database
// (the stored design's columns) or from any CSV (legacy spreadsheets, columns named by role flags). Text for
// people, --json for scripts (keys in docs/analysis.md). The statistics are core/stats/analysis.hpp's.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <iostream>
#include <map>
#include <optional>
#include <set>

#include "core/error.hpp"
#include "core/stats/analysis.hpp"
#include "core/stats/decimal_shift.hpp"
#include "firmware_app/app.hpp"
#include "firmware_app/trait_analysis.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"
#include "storage/trait_values.hpp"
#include "core/traits/yield.hpp"

namespace pw::app {
namespace {

struct Options {
    std::string db, trait, csv, design = "rcbd", block, treatment, response, row, col, main, sub, rep, plot,
        checks, out;
    bool json = false;
};

// What the analysis is of, for the heading and the JSON.
struct Subject {
    std::string source;      // trial code or CSV file
    std::string trait;
    std::string unit;
    std::vector<std::string> notes;         // flagged plots, merged duplicates
    std::map<std::size_t, std::string> missing_why;  // record → reason it has no value
    std::optional<std::size_t> unresolved;           // database: plots of this trait in conflict, left out
};

std::string num(double v) {
    if (v != 0 && (std::fabs(v) >= 1e7 || std::fabs(v) < 1e-3)) return fmt::format("{:.6g}", v);
    return fmt::format("{:.4f}", v);
}
std::string opt_num(const std::optional<double>& v) { return v ? num(*v) : ""; }

nlohmann::json opt(const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }

// ---- text -------------------------------------------------------------------------------------------------

std::string render_means_text(const MeansTable& t) {
    std::string o;
    const bool letters = std::any_of(t.rows.begin(), t.rows.end(), [](const MeanRow& r) { return !r.hsd_group.empty(); });
    std::size_t w = 24;
    for (const auto& r : t.rows) w = std::max(w, r.label.size() + 2);
    o += fmt::format("{:<{}} {:>12} {:>10} {:>4}{}\n", t.term == "treatment" ? "treatment" : t.term, w, "mean", "s.e.",
                     "n", letters ? "  LSD  HSD" : "");
    for (const auto& r : t.rows) {
        o += fmt::format("{:<{}} {:>12} {:>10} {:>4}{}\n", r.label, w, r.mean ? num(*r.mean) : "n.e.", opt_num(r.se),
                         r.n, letters ? fmt::format("  {:<4} {}", r.lsd_group, r.hsd_group) : "");
    }
    if (t.sed) {
        o += fmt::format("SED {}{}   LSD (5%) {}{}   [error: {}, {} df]\n", num(*t.sed),
                         t.sed_min && *t.sed_max - *t.sed_min > 1e-9 * *t.sed
                             ? fmt::format(" (average; {} to {})", num(*t.sed_min), num(*t.sed_max))
                             : "",
                         opt_num(t.lsd_5pct), t.hsd_5pct ? "   HSD (5%) " + num(*t.hsd_5pct) : "", t.error, t.error_df);
    }
    return o;
}

std::string render_text(const Subject& s, const AnalysisResult& r) {
    std::string o = fmt::format("{} - {}{}: {}, {} treatments{}, {} plots ({} missing)\n\n", s.source, s.trait,
                                s.unit.empty() ? "" : " (" + s.unit + ")", r.design, r.treatments,
                                r.blocks ? fmt::format(" x {} {}", r.blocks,
                                                       r.design == "latin"    ? "rows"
                                                       : r.design == "paired" ? "pairs"
                                                       : r.design == "alpha"  ? "incomplete blocks"
                                                                              : "blocks")
                                         : "",
                                r.observed + r.missing,
                                r.missing);
    std::size_t w = 10;
    for (const auto& row : r.anova) w = std::max(w, row.source.size() + 1);
    o += fmt::format("{:<{}} {:>4} {:>14} {:>14} {:>10} {:>10}\n", "source", w, "df", "SS", "MS", "F", "p");
    for (const auto& row : r.anova)
        o += fmt::format("{:<{}} {:>4} {:>14} {:>14} {:>10} {:>10}\n", row.source, w, row.df, num(row.ss),
                         row.source == "total" ? "" : num(row.ms), row.f ? fmt::format("{:.3f}", *row.f) : "",
                         row.p ? fmt::format("{:.4g}", *row.p) : "");
    for (const auto& a : r.aliased) o += "aliased: " + a.message + "\n";
    o += fmt::format("\ngrand mean {}", num(r.grand_mean));
    for (const auto& c : r.cv) o += fmt::format("   CV {:.2f}%{}", c.cv_percent, r.cv.size() > 1 ? " (" + c.error + ")" : "");
    if (r.sed) o += fmt::format("   SED {}   LSD (5%) {}", num(*r.sed), opt_num(r.lsd_5pct));
    o += "\n";
    for (const auto& e : r.efficiency) {
        o += fmt::format("relative efficiency vs {}: {:.3f}{}\n", e.versus, e.re,
                         e.df_factor ? fmt::format(" (df-adjusted {:.3f})", e.re_adjusted) : "");
    }
    if (r.paired) {
        const auto& p = *r.paired;
        o += fmt::format("\npaired t-test ({} - {}, {} pairs): mean difference {}, t = {:.4f}, df {}, p = {:.4g}, "
                         "95% CI [{}, {}]\n",
                         p.first, p.second, p.pairs, num(p.mean_difference), p.t, p.df, p.p, num(p.ci_lower),
                         num(p.ci_upper));
    }
    for (const auto& t : r.means) o += "\n" + render_means_text(t);
    if (!r.standard_errors.empty()) {
        o += "\nstandard errors of a difference\n";
        for (const auto& e : r.standard_errors) {
            o += fmt::format("  {:<48} SED {}   t {}   LSD (5%) {}\n", e.comparison, num(e.sed),
                             e.df ? fmt::format("{:.3f} ({} df)", e.t_critical, *e.df)
                                  : fmt::format("{:.3f} (weighted)", e.t_critical),
                             num(e.lsd_5pct));
        }
    }
    std::string missing;
    for (std::size_t i = 0; i < r.plots.size(); ++i) {
        if (r.plots[i].y) continue;
        auto why = s.missing_why.find(i);
        missing += fmt::format("missing: plot {}, treatment {}{}; estimated as {} (least squares{})\n", r.plots[i].plot,
                               r.plots[i].treatment, why == s.missing_why.end() ? "" : " (" + why->second + ")",
                               num(r.plots[i].fitted), r.design == "rcbd" ? " = Yates" : "");
    }
    if (!missing.empty()) o += "\n" + missing;
    std::string notes;
    for (const auto& n : r.notes) {
        if (n.find("is missing; the model predicts") == std::string::npos) notes += "note: " + n + "\n";
    }
    for (const auto& n : s.notes) notes += "note: " + n + "\n";
    if (!notes.empty()) o += "\n" + notes;
    return o;
}

// ---- JSON -------------------------------------------------------------------------------------------------

nlohmann::json means_json(const MeansTable& t) {
    nlohmann::json j = {{"term", t.term}, {"factors", t.factors}, {"error", t.error}, {"error_ms", t.error_ms},
                        {"error_df", t.error_df}, {"sed", opt(t.sed)}, {"sed_min", opt(t.sed_min)},
                        {"sed_max", opt(t.sed_max)}, {"lsd_5pct", opt(t.lsd_5pct)}, {"hsd_5pct", opt(t.hsd_5pct)}};
    j["rows"] = nlohmann::json::array();
    for (const auto& r : t.rows) {
        j["rows"].push_back({{"label", r.label}, {"levels", r.levels}, {"mean", opt(r.mean)}, {"se", opt(r.se)},
                             {"n", r.n}, {"lsd_group", r.lsd_group}, {"hsd_group", r.hsd_group}});
    }
    j["pairs"] = nlohmann::json::array();
    for (const auto& p : t.pairs) {
        j["pairs"].push_back({{"a", p.a}, {"b", p.b}, {"difference", p.difference}, {"sed", p.sed}, {"t", p.t},
                              {"p", p.p}, {"tukey_p", opt(p.tukey_p)}, {"tukey_lower", opt(p.tukey_lower)},
                              {"tukey_upper", opt(p.tukey_upper)}});
    }
    return j;
}

std::string render_json(const Subject& s, const AnalysisResult& r) {
    nlohmann::json j;
    j["source"] = s.source;
    j["trait"] = s.trait;
    j["unit"] = s.unit;
    j["design"] = r.design;
    j["anova"] = nlohmann::json::array();
    for (const auto& row : r.anova)
        j["anova"].push_back({{"source", row.source}, {"df", row.df}, {"ss", row.ss}, {"ms", row.ms},
                              {"f", opt(row.f)}, {"p", opt(row.p)}, {"stratum", row.stratum}, {"error", row.error},
                              {"is_error", row.is_error}, {"df_adjusted", row.df_adjusted},
                              {"ss_adjusted", row.ss_adjusted}, {"f_adjusted", opt(row.f_adjusted)},
                              {"p_adjusted", opt(row.p_adjusted)}});
    j["aliased"] = nlohmann::json::array();
    for (const auto& a : r.aliased)
        j["aliased"].push_back({{"term", a.term}, {"df", a.df}, {"df_expected", a.df_expected}, {"message", a.message}});
    j["grand_mean"] = r.grand_mean;
    j["cv_percent"] = r.cv_percent;
    j["cv"] = nlohmann::json::array();
    for (const auto& c : r.cv) j["cv"].push_back({{"error", c.error}, {"cv_percent", c.cv_percent}});
    j["sed"] = opt(r.sed);
    j["lsd_5pct"] = opt(r.lsd_5pct);
    j["blocks"] = r.blocks;
    j["treatments"] = r.treatments;
    j["observed"] = r.observed;
    j["means"] = nlohmann::json::array();
    const MeansTable& trt = r.means.at(0);
    for (const auto& m : trt.rows)
        j["means"].push_back({{"treatment", m.label}, {"mean", opt(m.mean)}, {"n", m.n}, {"se", opt(m.se)},
                              {"lsd_group", m.lsd_group}, {"hsd_group", m.hsd_group}});
    j["means_tables"] = nlohmann::json::array();
    for (const auto& t : r.means) j["means_tables"].push_back(means_json(t));
    j["standard_errors"] = nlohmann::json::array();
    for (const auto& e : r.standard_errors)
        j["standard_errors"].push_back({{"comparison", e.comparison}, {"sed", e.sed},
                                        {"df", e.df ? nlohmann::json(*e.df) : nlohmann::json(nullptr)},
                                        {"t_critical", e.t_critical}, {"lsd_5pct", e.lsd_5pct}});
    if (r.paired) {
        const auto& p = *r.paired;
        j["paired"] = {{"first", p.first}, {"second", p.second}, {"pairs", p.pairs},
                       {"mean_difference", p.mean_difference}, {"sd_difference", p.sd_difference}, {"se", p.se},
                       {"t", p.t}, {"df", p.df}, {"p", p.p}, {"ci_lower", p.ci_lower}, {"ci_upper", p.ci_upper}};
    } else {
        j["paired"] = nullptr;
    }
    j["efficiency"] = nlohmann::json::array();
    for (const auto& e : r.efficiency)
        j["efficiency"].push_back({{"versus", e.versus}, {"re", e.re},
                                   {"df_factor", opt(e.df_factor)}, {"re_adjusted", e.re_adjusted},
                                   {"source", e.source}});
    j["plots"] = nlohmann::json::array();
    j["missing"] = nlohmann::json::array();
    for (std::size_t i = 0; i < r.plots.size(); ++i) {
        const auto& p = r.plots[i];
        j["plots"].push_back({{"plot", p.plot}, {"treatment", p.treatment}, {"labels", p.labels}, {"y", opt(p.y)},
                              {"fitted", p.fitted}, {"residual", opt(p.residual)}, {"leverage", opt(p.leverage)},
                              {"standardized_residual", opt(p.standardized)}});
        if (p.y) continue;
        auto why = s.missing_why.find(i);
        auto blk = p.labels.find("block");
        j["missing"].push_back({{"plot", p.plot}, {"block", blk == p.labels.end() ? "" : blk->second},
                                {"treatment", p.treatment}, {"labels", p.labels}, {"estimate", p.fitted},
                                {"reason", why == s.missing_why.end() ? "" : why->second}});
    }
    std::vector<std::string> notes;
    for (const auto& n : r.notes) {
        if (n.find("is missing; the model predicts") == std::string::npos) notes.push_back(n);
    }
    notes.insert(notes.end(), s.notes.begin(), s.notes.end());
    j["notes"] = notes;
    if (s.unresolved) j["unresolved_conflicts"] = *s.unresolved;
    return j.dump(2) + "\n";
}

// ---- from the trial database ------------------------------------------------------------------------------

// The levels of each factor of treatment `index` (first factor slowest, docs/spec.md); all empty for the
// extra control outside the crossing.
std::vector<std::string> factor_levels_of(const TrialSpec& spec, int index) {
    std::size_t cells = 1;
    for (const auto& f : spec.factors) cells *= f.levels.size();
    std::vector<std::string> out(spec.factors.size());
    if (static_cast<std::size_t>(index) >= cells) return out;
    std::size_t rest = static_cast<std::size_t>(index);
    for (std::size_t k = spec.factors.size(); k-- > 0;) {
        out[k] = spec.factors[k].levels[rest % spec.factors[k].levels.size()];
        rest /= spec.factors[k].levels.size();
    }
    return out;
}

// One value per plot: the resolved values (storage/sync_conflicts.hpp), or for a yield the values computed
// from them (storage/trait_values.hpp). Plots whose values disagree after a merge of handhelds are left out
// until the conflict is resolved (docs/station.md).
TrialData from_values(const Store& store, const TraitValues& values, Subject& s) {
    const StoredTrial& t = store.trial();
    const std::string& trait_name = values.trait.name;
    const TraitSpec* trait = &values.trait;
    if (trait->kind == TraitKind::Date || trait->kind == TraitKind::Text)
        throw InputError(fmt::format("--trait {}: a {} trait has no ANOVA; choose a number, count or score",
                                     trait_name, to_string(trait->kind)));
    s.source = "trial " + t.spec.code;
    s.trait = trait->name;
    s.unit = trait->unit;
    if (values.yield) s.notes.push_back(fmt::format("{} is computed: {}", trait_name, describe_yield(*values.yield)));
    const auto& latest = values.values;
    const auto& conflicts = values.conflicts;
    s.unresolved = conflicts.size();
    if (!conflicts.empty())
        s.notes.push_back(fmt::format("{} plot(s) of {} with values in conflict are left out of the analysis "
                                      "(plotwright conflicts, plotwright resolve)",
                                      conflicts.size(), trait_name));
    // Flags (oldest first): a flag that treats the plot as missing leaves its values out, recorded before or
    // after (docs/recording.md); other flags keep the values, with a note.
    std::map<int, std::string> flags, missing_flags;
    for (const auto& ev : store.plot_events()) {
        const std::string text = fmt::format("flagged {}: {}", ev.flag.empty() ? to_string(ev.state) : ev.flag, ev.reason);
        flags[ev.plot] = text;
        if (ev.state == PlotState::Missing) missing_flags[ev.plot] = text;
    }

    // The design's columns of every plot (docs/design.md), in treatment (spec) order then block order.
    const std::string& design = t.spec.design;
    std::vector<const PlotPlacement*> order;
    for (const auto& p : t.layout.plots) order.push_back(&p);
    std::stable_sort(order.begin(), order.end(), [](auto* a, auto* b) {
        return a->treatment != b->treatment ? a->treatment < b->treatment : a->block < b->block;
    });
    TrialData d;
    d.design = design;
    const bool factorial = !t.spec.factors.empty();
    std::vector<std::size_t> factor_order;  // split/strip: the main factor first
    for (std::size_t k = 0; k < t.spec.factors.size(); ++k) factor_order.push_back(k);
    if (design == "split" || design == "strip") {
        std::stable_sort(factor_order.begin(), factor_order.end(), [&](std::size_t a, std::size_t b) {
            return t.spec.factors[a].role == "main" && t.spec.factors[b].role != "main";
        });
    }
    if (factorial) {
        for (std::size_t k : factor_order) d.factor_names.push_back(t.spec.factors[k].name);
        d.factor_levels.resize(factor_order.size());
    }
    for (const auto& tr : t.spec.treatments)
        if (tr.check) d.checks.push_back(tr.label);
    for (const PlotPlacement* p : order) {
        const std::size_t i = d.plot.size();
        d.plot.push_back(std::to_string(p->id));
        d.treatment.push_back(t.spec.treatments.at(static_cast<std::size_t>(p->treatment)).label);
        if (design == "alpha") {
            d.rep.push_back(std::to_string(p->rep));
            d.block.push_back(std::to_string(p->incomplete_block));
        } else if (design == "latin") {
            d.row.push_back(std::to_string(p->square_row));
            d.col.push_back(std::to_string(p->square_col));
        } else if (design != "crd") {
            d.block.push_back(std::to_string(p->block));
        }
        if (factorial) {
            const auto levels = factor_levels_of(t.spec, p->treatment);
            for (std::size_t k = 0; k < factor_order.size(); ++k) d.factor_levels[k].push_back(levels[factor_order[k]]);
        }
        auto flag = flags.find(p->id);
        auto it = latest.find(p->id);
        if (auto mf = missing_flags.find(p->id); mf != missing_flags.end()) {
            s.missing_why[i] = fmt::format("plot {}: {}{}", p->id, mf->second,
                                           it == latest.end() ? "" : "; its recorded value is not used");
            d.y.push_back(std::nan(""));
            continue;
        }
        if (auto c = conflicts.find(p->id); c != conflicts.end()) {
            s.missing_why[i] = fmt::format("plot {}: {}", p->id, c->second);
            d.y.push_back(std::nan(""));
            continue;
        }
        if (auto nc = values.not_computed.find(p->id); it == latest.end() && nc != values.not_computed.end()) {
            s.missing_why[i] = fmt::format("plot {}: {}", p->id, nc->second);
            d.y.push_back(std::nan(""));
            continue;
        }
        if (it == latest.end()) {
            s.missing_why[i] = fmt::format("plot {}{}", p->id, flag == flags.end() ? ": no value recorded" : ": " + flag->second);
            d.y.push_back(std::nan(""));  // a known plot without a value (analysis.hpp)
            continue;
        }
        if (flag != flags.end()) s.notes.push_back(fmt::format("plot {} {}; its value is used", p->id, flag->second));
        d.y.push_back(*it->second.obs.number);
    }
    if ((design == "split" || design == "strip") && d.factor_names.size() != 2)
        throw InputError(fmt::format("trial {}: a {} design needs its two [[factors]] (main and sub)", t.spec.code, design));
    return d;
}

TrialData from_store(const Store& store, const std::string& trait_name, Subject& s) {
    return from_values(store, trait_values(store.trial(), resolved_observations(store), trait_name), s);
}

// ---- from a CSV file --------------------------------------------------------------------------------------

std::vector<std::string> split_list(const std::string& s) {
    std::vector<std::string> out;
    std::size_t start = 0;
    while (true) {
        const std::size_t comma = s.find(',', start);
        out.push_back(s.substr(start, comma == std::string::npos ? std::string::npos : comma - start));
        if (comma == std::string::npos) break;
        start = comma + 1;
    }
    return out;
}

TrialData from_csv(const Options& o, Subject& s) {
    // The role flags each design needs and takes (docs/analysis.md).
    static const std::map<std::string, std::pair<std::vector<std::string>, std::vector<std::string>>> roles = {
        {"crd", {{"--treatment"}, {}}},
        {"rcbd", {{"--block", "--treatment"}, {}}},
        {"paired", {{"--block", "--treatment"}, {}}},
        {"latin", {{"--row", "--col", "--treatment"}, {}}},
        {"split", {{"--block", "--main", "--sub"}, {}}},
        {"strip", {{"--block", "--main", "--sub"}, {}}},
        {"augmented", {{"--block", "--treatment"}, {"--checks"}}},
        {"alpha", {{"--rep", "--block", "--treatment"}, {}}},
    };
    const std::map<std::string, const std::string*> given = {
        {"--block", &o.block}, {"--treatment", &o.treatment}, {"--row", &o.row}, {"--col", &o.col},
        {"--main", &o.main},   {"--sub", &o.sub},             {"--rep", &o.rep}, {"--checks", &o.checks}};
    const auto& [needed, optional] = roles.at(o.design);
    if (o.response.empty()) throw InputError("--csv needs --response COLUMN (the measured value)");
    for (const auto& flag : needed)
        if (given.at(flag)->empty())
            throw InputError(fmt::format("--csv with --design {} needs {} COLUMN", o.design, flag));
    for (const auto& [flag, value] : given) {
        const bool used = std::find(needed.begin(), needed.end(), flag) != needed.end() ||
                          std::find(optional.begin(), optional.end(), flag) != optional.end();
        if (!value->empty() && !used)
            throw InputError(fmt::format("{} is not used by the {} design (it takes {})", flag, o.design,
                                         fmt::join(needed, ", ")));
    }

    CsvTable table = parse_csv(read_text_file(o.csv), o.csv);
    s.source = o.csv;
    s.trait = o.response;
    TrialData d;
    d.design = o.design;
    auto column = [&](const std::string& flag, const std::string& name, std::vector<std::string>& out) {
        const std::size_t c = table.column(name, o.csv);
        for (const auto& row : table.rows) out.push_back(row[c]);
        d.role_names[flag.substr(2)] = fmt::format("column {} ({})", name, flag);
    };
    if (!o.block.empty()) column("--block", o.block, d.block);
    if (!o.row.empty()) column("--row", o.row, d.row);
    if (!o.col.empty()) column("--col", o.col, d.col);
    if (!o.rep.empty()) column("--rep", o.rep, d.rep);
    if (!o.plot.empty()) column("--plot", o.plot, d.plot);
    std::vector<std::string> factors;
    if (o.design == "split" || o.design == "strip") {
        factors = {o.main, o.sub};
        d.role_names["main"] = fmt::format("column {} (--main)", o.main);
        d.role_names["sub"] = fmt::format("column {} (--sub)", o.sub);
    } else {
        factors = split_list(o.treatment);
        if (factors.size() == 1) {
            column("--treatment", factors[0], d.treatment);
            factors.clear();
        }
    }
    if (!factors.empty()) {
        // Factorial: one column per factor; the treatment is the crossing of their levels.
        d.role_names["treatment"] = fmt::format("columns {} (--treatment)", o.treatment);
        for (const auto& f : factors) {
            d.factor_names.push_back(f);
            d.factor_levels.emplace_back();
            const std::size_t c = table.column(f, o.csv);
            for (const auto& row : table.rows) d.factor_levels.back().push_back(row[c]);
        }
        for (std::size_t i = 0; i < table.rows.size(); ++i) {
            std::vector<std::string> levels;
            for (const auto& col : d.factor_levels) {
                if (col[i].empty())
                    throw InputError(fmt::format("{}: record {} (after the header), column {}: empty; every plot needs a "
                                                 "level of each factor",
                                                 o.csv, i + 1, factors[&col - &d.factor_levels[0]]));
                levels.push_back(col[i]);
            }
            d.treatment.push_back(fmt::format("{}", fmt::join(levels, kFactorLabelSeparator)));
        }
    }
    if (!o.checks.empty()) d.checks = split_list(o.checks);

    // The response, shifted exactly in decimal so that constant leading digits cost no accuracy.
    const std::size_t cr = table.column(o.response, o.csv);
    std::vector<std::string> cells;
    for (std::size_t i = 0; i < table.rows.size(); ++i) {
        const std::string& cell = table.rows[i][cr];
        if (cell.empty() || cell == "NA") {  // an empty cell (or R's NA) is a missing plot
            s.missing_why[i] = fmt::format("{} record {}: empty", o.csv, i + 1);
            cells.emplace_back();
        } else {
            cells.push_back(cell);
        }
    }
    std::size_t bad = 0;
    ShiftedColumn y = shift_decimal(cells, bad);
    if (y.values.empty() && !cells.empty())
        throw InputError(fmt::format("{}: record {} (after the header), column {}: '{}' is not a number", o.csv, bad + 1,
                                     o.response, cells[bad]));
    d.y = y.values;
    d.y_offset = y.offset;
    return d;
}

}  // namespace

std::string analyze_trait(const Store& store, const std::string& trait, bool json) {
    Subject s;
    const AnalysisResult r = analyze_trial(from_store(store, trait, s));
    return json ? render_json(s, r) : render_text(s, r);
}

TraitAnalysis analyze_trait_result(const Store& store, const TraitValues& values) {
    Subject s;
    TraitAnalysis t;
    t.result = analyze_trial(from_values(store, values, s));
    t.unit = s.unit;
    t.missing_why = s.missing_why;
    for (const auto& n : t.result.notes) {
        if (n.find("is missing; the model predicts") == std::string::npos) t.notes.push_back(n);
    }
    t.notes.insert(t.notes.end(), s.notes.begin(), s.notes.end());
    return t;
}

void add_analyze_command(CLI::App& app) {
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("analyze", "ANOVA of one trait by the trial's design: strata, means, LSD, HSD");
    auto* db = cmd->add_option("--db", o->db, "Trial database (its stored design is analysed)")->check(CLI::ExistingFile);
    cmd->add_option("--trait", o->trait, "Trait or yield ([[yields]] of the spec) to analyse (with --db)");
    auto* csv = cmd->add_option("--csv", o->csv, "Analyse a CSV file instead of a trial database")
                    ->check(CLI::ExistingFile);
    db->excludes(csv);
    cmd->add_option("--design", o->design, "Design of the CSV data (default rcbd)")
        ->check(CLI::IsMember(analysis_designs()));
    cmd->add_option("--response", o->response, "CSV column holding the measured value");
    cmd->add_option("--block", o->block, "CSV column: block (rcbd, split, strip, augmented), pair (paired), "
                                         "incomplete block within its replicate (alpha)");
    cmd->add_option("--treatment", o->treatment, "CSV column(s) holding the treatment or entry; several columns "
                                                 "separated by commas: a factorial, one column per factor");
    cmd->add_option("--row", o->row, "CSV column: row of a Latin square");
    cmd->add_option("--col", o->col, "CSV column: column of a Latin square");
    cmd->add_option("--main", o->main, "CSV column: main-plot factor (split), main-strip factor (strip)");
    cmd->add_option("--sub", o->sub, "CSV column: subplot factor (split), sub-strip factor (strip)");
    cmd->add_option("--rep", o->rep, "CSV column: replicate (alpha)");
    cmd->add_option("--plot", o->plot, "CSV column: plot id, shown with residuals and missing plots");
    cmd->add_option("--checks", o->checks, "augmented: the check entries, separated by commas "
                                           "(default: entries found in more than one block)");
    cmd->add_flag("--json", o->json, "Print the results as JSON");
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->callback([o] {
        if (!o->db.empty()) {
            if (o->trait.empty()) throw InputError("--db needs --trait NAME");
            const Store store = Store::open(o->db);
            Subject s;
            const AnalysisResult r = analyze_trial(from_store(store, o->trait, s));
            emit(o->out, o->json ? render_json(s, r) : render_text(s, r));
            if (s.unresolved.value_or(0) > 0)
                std::cerr << fmt::format("note: {} plot(s) of {} in conflict left out of the analysis (plotwright "
                                         "conflicts lists them, plotwright resolve settles them)\n",
                                         *s.unresolved, o->trait);
            return;
        }
        if (o->csv.empty())
            throw InputError("give --db FILE --trait NAME, or --csv FILE --design D --response COLUMN with the design's "
                             "role columns (docs/analysis.md)");
        Subject s;
        const AnalysisResult r = analyze_trial(from_csv(*o, s));
        emit(o->out, o->json ? render_json(s, r) : render_text(s, r));
    });
}

}  // namespace pw::app
