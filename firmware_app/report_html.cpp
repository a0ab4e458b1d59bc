// The trial report's document (report_html.hpp): the trial's facts, then one section per numeric trait
// (maps, means, ANOVA, data quality), then the methods. The pictures come from report_charts.cpp.
//
// Numbers shown are rounded for reading; each table cell that holds a result also carries it at full
// precision in data-value, so that a script can check the page against `plotwright analyze --json`.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <set>

#include "core/stats/anova.hpp"
#include "firmware_app/report_html.hpp"

namespace pw::report {
namespace {

std::string esc(const std::string& s) { return html_escape(s); }
std::string full(double v) { return fmt::format("{:.17g}", v); }

// As `analyze` prints: four decimals, or six significant digits for very large or small numbers.
std::string num(double v) {
    if (v != 0 && (std::fabs(v) >= 1e7 || std::fabs(v) < 1e-3)) return fmt::format("{:.6g}", v);
    return fmt::format("{:.4f}", v);
}

std::string p_text(double p) { return p < 0.0001 ? "&lt;0.0001" : fmt::format("{:.4f}", p); }

// A table cell with the shown text and the full-precision value.
std::string cell(const std::optional<double>& v, const std::string& shown) {
    if (!v) return "<td class=\"num\"></td>";
    return fmt::format("<td class=\"num\" data-value=\"{}\">{}</td>", full(*v), shown);
}
std::string cell(double v) { return cell(std::optional<double>(v), num(v)); }

const char* design_name(const std::string& d) {
    if (d == "crd") return "completely randomized design";
    if (d == "rcbd") return "randomized complete block design";
    if (d == "latin") return "Latin square";
    if (d == "split") return "split-plot design";
    if (d == "strip") return "strip-plot (split-block) design";
    if (d == "paired") return "paired plots";
    if (d == "augmented") return "augmented block design";
    if (d == "alpha") return "alpha lattice (resolvable incomplete blocks)";
    return "design";
}

// The model of each design as docs/analysis.md gives it, with its source.
const char* design_model(const std::string& d) {
    if (d == "crd") return "treatment + residual";
    if (d == "rcbd") return "block + treatment + residual (Gomez &amp; Gomez 1984, ch. 2)";
    if (d == "paired") return "pair + treatment + residual, with the paired t-test";
    if (d == "latin") return "row + column + treatment + residual (Gomez &amp; Gomez 1984, ch. 2)";
    if (d == "split")
        return "block + A + residual (whole plot, block &times; A) + B + A:B + residual (subplot); A is tested "
               "against the whole-plot error, B and A:B against the subplot error (Gomez &amp; Gomez 1984, ch. 3)";
    if (d == "strip")
        return "block + A + residual (main strips) + B + residual (sub strips) + A:B + residual (intersection); "
               "each factor against its own strip error, the interaction against the intersection plots "
               "(Gomez &amp; Gomez 1984, ch. 3)";
    if (d == "augmented")
        return "block + checks vs new entries + checks + new entries + residual, the block effects estimated from "
               "the repeated checks and new entries adjusted for their block (Federer 1956)";
    if (d == "alpha")
        return "replicate + block within replicate + entry + residual, entries adjusted for blocks (intra-block "
               "analysis)";
    return "";
}

// Treatment labels and factor levels as the report shows them: themselves, or codes on a blind copy.
class Labels {
public:
    Labels(const TrialSpec& spec, bool blind) : blind_(blind) {
        if (!blind) return;
        for (std::size_t i = 0; i < spec.treatments.size(); ++i)
            map_[spec.treatments[i].label] = fmt::format("T{}", i + 1);
        for (const FactorSpec& f : spec.factors)
            for (std::size_t j = 0; j < f.levels.size(); ++j)
                map_.emplace(f.levels[j], fmt::format("{} {}", f.name, j + 1));
    }
    std::string operator()(const std::string& s) const {
        if (!blind_) return s;
        if (auto it = map_.find(s); it != map_.end()) return it->second;
        // Crossed labels: each level on its own.
        const std::string sep = kFactorLabelSeparator;
        if (s.find(sep) != std::string::npos) {
            std::string out;
            std::size_t start = 0;
            while (true) {
                const std::size_t at = s.find(sep, start);
                const std::string part = s.substr(start, at == std::string::npos ? std::string::npos : at - start);
                auto it = map_.find(part);
                out += (start ? sep : "") + (it == map_.end() ? std::string("?") : it->second);
                if (at == std::string::npos) break;
                start = at + sep.size();
            }
            return out;
        }
        return s;
    }
    const std::map<std::string, std::string>& map() const { return map_; }
    bool blind() const { return blind_; }

private:
    bool blind_;
    std::map<std::string, std::string> map_;
};

const char* kCss = R"CSS(
*{box-sizing:border-box}
html{-webkit-text-size-adjust:100%}
body{font-family:"DejaVu Sans",system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;color:#111;background:#fff;
 margin:0 auto;padding:0 1rem 2rem;line-height:1.45;max-width:1180px}
h1{font-size:1.6rem;margin:1rem 0 .2rem}
h2{font-size:1.3rem;border-bottom:2px solid #111;padding-bottom:.2rem;margin-top:2.2rem}
h3{font-size:1.05rem;margin:1.4rem 0 .4rem}
p.sub{color:#444;margin:.1rem 0}
nav ul{padding-left:1.2rem;margin:.3rem 0}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.15rem 1rem;margin:.5rem 0}
dl.facts dt{font-weight:600}
dl.facts dd{margin:0;overflow-wrap:anywhere}
.scroll{overflow-x:auto;max-width:100%}
table{border-collapse:collapse;font-variant-numeric:tabular-nums;margin:.3rem 0 .8rem}
th,td{padding:.18rem .6rem;border-bottom:1px solid #bbb;text-align:left;white-space:nowrap}
th{border-bottom:1.5px solid #111}
.num{text-align:right}
tr.error td{font-style:italic}
tr.stratum th{font-weight:600;border-bottom:1px solid #111;padding-top:.5rem}
tr.total td{border-top:1.5px solid #111}
.pair{display:grid;grid-template-columns:1fr 1fr;gap:1.2rem;align-items:start}
figure{margin:.4rem 0 1rem}
figcaption{font-size:.88rem;color:#333}
.refused{border-left:4px solid #111;padding:.3rem .7rem;background:#f3f3f3}
.note{font-size:.9rem}
svg.chart{max-width:720px;min-width:480px}
svg{width:100%;height:auto;display:block;-webkit-print-color-adjust:exact;print-color-adjust:exact}
svg text{font-family:"DejaVu Sans",system-ui,sans-serif}
svg .grid{stroke:#ccc;stroke-dasharray:2 2}
svg .band{fill:#f2f2f2}
svg .whisker{stroke:#111;stroke-width:1.6}
svg .dot{fill:#111}
svg .label{text-anchor:end;font-size:13px}
svg .letters,svg .letters-title{font-size:13px;font-weight:700}
svg .ne{font-size:11px;font-style:italic}
svg .axis,svg .tickmark{stroke:#111}
svg .tick{font-size:12px;text-anchor:middle}
svg .axis-title{font-size:12px;text-anchor:middle}
svg.map g.plot>rect{stroke:#333;stroke-width:.6}
svg.map g.plot>rect.flagged{fill:none;stroke:#000;stroke-width:1.2;stroke-dasharray:3 2}
svg.map g.plot>rect.outline{fill:none;stroke:#000;stroke-width:3}
svg.map .guard rect{fill:#e6e6e6;stroke:#888;stroke-width:.6}
svg.map .block{fill:none;stroke:#000;stroke-width:2}
svg.map text{text-anchor:middle}
svg.map text.dark{fill:#111}
svg.map text.light{fill:#fff}
svg.map text.v{font-weight:700}
svg.map .block-label{font-size:10px;font-weight:700;text-anchor:start}
svg.map .north line{stroke:#000;stroke-width:2}
svg.map .north text,svg.map .scalebar text{font-size:11px;font-weight:700;text-anchor:start}
svg.map .north text{text-anchor:middle}
svg.map .scalebar rect{stroke:#000;stroke-width:.8}
svg.legend .frame{fill:none;stroke:#333}
svg.legend .tick{font-size:12px;text-anchor:middle}
svg.legend .note{font-size:12px}
svg.legend .flagged{fill:none;stroke:#000;stroke-dasharray:3 2}
svg.time .frame{fill:none;stroke:#888}
svg.time .zero{stroke:#111}
svg.time .limit{stroke:#111;stroke-dasharray:5 3}
svg.time .tick{text-anchor:end}
svg.time .tick.time{text-anchor:middle}
svg.time .point *,svg.time .key *{fill:#111}
svg.time .stroke{stroke:#111;fill:none;stroke-width:1.5}
svg.time .flag,svg.time .key text{font-size:12px}
details summary{cursor:pointer;font-weight:600}
@media (max-width:600px){
 body{padding:0 .6rem 1.5rem}
 h1{font-size:1.3rem}
 .pair{grid-template-columns:1fr}
 dl.facts{grid-template-columns:1fr}
 dl.facts dd{margin-bottom:.35rem}
}
@media print{
 body{max-width:none;padding:0;font-size:10pt}
 nav{display:none}
 section.trait{break-before:page}
 figure,svg,tr{break-inside:avoid}
 h2,h3{break-after:avoid}
 .scroll{overflow:visible}
 .refused{background:none}
 svg .band{fill:none}
}
)CSS";

struct TraitView {
    const TraitSection& s;
    const ReportInput& in;
    const Labels& lab;
    std::map<int, const ObservationRecord*> latest;   // newest current value per plot
    std::map<int, std::vector<const PlotEvent*>> flags;
};

std::string trait_title(const TraitSpec& t) {
    const std::string name = t.label.empty() ? t.name : t.label;
    return name + (t.unit.empty() ? "" : " (" + t.unit + ")");
}

int mean_decimals(const TraitSpec& t) { return t.kind == TraitKind::Number ? std::min(t.decimals + 1, 6) : 2; }

std::string value_map(const TraitView& v, const MapModel& model) {
    MapColouring col;
    col.scale = MapScale::Sequential;
    col.id = "m-" + v.s.trait.name + "-v";
    col.unit = v.s.trait.unit;
    col.caption = fmt::format("Field map: {} of each plot", trait_title(v.s.trait));
    bool any = false;
    for (const auto& [plot, rec] : v.latest) {
        if (!rec->obs.number) continue;
        const double x = *rec->obs.number;
        col.lo = any ? std::min(col.lo, x) : x;
        col.hi = any ? std::max(col.hi, x) : x;
        any = true;
    }
    for (const PlotPlacement& p : v.in.layout.plots) {
        MapCell c;
        auto it = v.latest.find(p.id);
        if (it != v.latest.end() && it->second->obs.number) {
            c.value = *it->second->obs.number;
            c.text = it->second->obs.value;
        }
        for (const PlotEvent* e : v.flags.count(p.id) ? v.flags.at(p.id) : std::vector<const PlotEvent*>{})
            if (e->state == PlotState::Damaged) c.flagged = true;
        c.title = fmt::format("plot {}: {}", p.id, c.value ? c.text + (v.s.trait.unit.empty() ? "" : " " + v.s.trait.unit)
                                                           : std::string("missing"));
        col.cells[p.id] = c;
    }
    return fmt::format("<figure>{}{}<figcaption>Recorded {}: darker is higher (ColorBrewer YlGnBu, 9 equal classes "
                       "from the lowest to the highest value); the value is printed in each plot where it fits, "
                       "the plot id above it.</figcaption></figure>\n",
                       field_map_svg(model, col), map_legend_svg(col), esc(trait_title(v.s.trait)));
}

std::string residual_map(const TraitView& v, const MapModel& model, const AnalysisResult& r) {
    MapColouring col;
    col.scale = MapScale::Diverging;
    col.id = "m-" + v.s.trait.name + "-r";
    col.caption = fmt::format("Field map: standardized residual of {}", trait_title(v.s.trait));
    for (const PlotFit& f : r.plots) {
        const int id = std::atoi(f.plot.c_str());
        MapCell c;
        const auto z = f.standardized;
        if (z) {
            c.value = *z;
            c.text = fmt::format("{:+.1f}", *z);
            c.outlier = std::fabs(*z) > 3;
        } else if (f.y) {
            c.text = "h=1";  // observed with leverage 1: no standardized residual (hatched, not "missing")
        }
        if (v.flags.count(id))
            for (const PlotEvent* e : v.flags.at(id))
                if (e->state == PlotState::Damaged) c.flagged = true;
        c.title = z          ? fmt::format("plot {}: standardized residual {:+.2f}", f.plot, *z)
                  : f.y ? fmt::format("plot {}: no standardized residual (leverage 1: the plot alone fixes its "
                                      "fitted value)", f.plot)
                        : fmt::format("plot {}: missing", f.plot);
        col.cells[id] = c;
    }
    return fmt::format("<figure>{}{}<figcaption>Standardized residuals (R's rstandard: residual ÷ √(MS of the plot "
                       "error × (1 − leverage))): red below the model's prediction, blue above (ColorBrewer RdBu, 11 "
                       "classes); beyond ±3 outlined. A patch of one colour shows field variation the design did not "
                       "take out.</figcaption></figure>\n",
                       field_map_svg(model, col), map_legend_svg(col));
}

std::string anova_table(const TraitSection& s, const AnalysisResult& r, const Labels& lab) {
    (void)lab;
    std::string o = fmt::format("<div class=\"scroll\"><table class=\"anova\" data-trait=\"{}\"><thead><tr><th>source"
                                "</th><th class=\"num\">df</th><th class=\"num\">SS</th><th class=\"num\">MS</th>"
                                "<th class=\"num\">F</th><th class=\"num\">p</th></tr></thead><tbody>\n",
                                esc(s.trait.name));
    std::string stratum = "";
    for (const AnalysisRow& row : r.anova) {
        if (row.stratum != stratum && !row.stratum.empty() && row.source != "total")
            o += fmt::format("<tr class=\"stratum\"><th colspan=\"6\">{} stratum</th></tr>\n", esc(row.stratum));
        stratum = row.stratum;
        const bool total = row.source == "total";
        o += fmt::format("<tr class=\"{}\" data-source=\"{}\"><td>{}</td><td class=\"num\" data-value=\"{}\">{}</td>{}",
                         total ? "total" : row.is_error ? "error" : "term", esc(row.source), esc(row.source), row.df,
                         row.df, cell(row.ss));
        o += total ? "<td class=\"num\"></td>" : cell(row.ms);
        o += cell(row.f, row.f ? fmt::format("{:.3f}", *row.f) : "");
        o += cell(row.p, row.p ? p_text(*row.p) : "");
        o += "</tr>\n";
    }
    o += "</tbody></table></div>\n";
    return o;
}

std::string means_table(const MeansTable& t, const TraitSpec& trait, const Labels& lab) {
    const int d = mean_decimals(trait);
    double tcrit = 0;
    if (t.error_df >= 1) tcrit = t_quantile(0.975, t.error_df);
    std::string o = fmt::format(
        "<div class=\"scroll\"><table class=\"means\" data-term=\"{}\"><thead><tr><th>{}</th><th class=\"num\">mean"
        "</th><th class=\"num\">s.e.</th><th class=\"num\">n</th><th class=\"num\">95 % interval</th><th>LSD</th>"
        "<th>HSD</th></tr></thead><tbody>\n",
        esc(t.term), esc(t.term));
    for (const MeanRow& m : t.rows) {
        o += fmt::format("<tr data-label=\"{}\"><td>{}</td>", esc(lab(m.label)), esc(lab(m.label)));
        o += cell(m.mean, m.mean ? fmt::format("{:.{}f}", *m.mean, d) : "n.e.");
        o += cell(m.se, m.se ? fmt::format("{:.{}f}", *m.se, d) : "");
        o += fmt::format("<td class=\"num\">{}</td>", m.n);
        if (m.mean && m.se && tcrit > 0)
            o += fmt::format("<td class=\"num\">{:.{}f} to {:.{}f}</td>", *m.mean - tcrit * *m.se, d,
                             *m.mean + tcrit * *m.se, d);
        else
            o += "<td></td>";
        o += fmt::format("<td>{}</td><td>{}</td></tr>\n", esc(m.lsd_group), esc(m.hsd_group));
    }
    o += "</tbody></table></div>\n";
    if (t.sed)
        o += fmt::format("<p class=\"note\">SED {}{}, LSD (5 %) {}{}; error: {}, {} df.</p>\n", num(*t.sed),
                         t.sed_min && t.sed_max && *t.sed_max - *t.sed_min > 1e-9 * *t.sed
                             ? fmt::format(" (average; {} to {})", num(*t.sed_min), num(*t.sed_max))
                             : "",
                         t.lsd_5pct ? num(*t.lsd_5pct) : "–", t.hsd_5pct ? ", HSD (5 %) " + num(*t.hsd_5pct) : "",
                         esc(t.error), t.error_df);
    return o;
}

std::string summary(const AnalysisResult& r, const Labels& lab) {
    std::string o = "<dl class=\"facts summary\">";
    o += fmt::format("<dt>grand mean</dt><dd data-key=\"grand_mean\" data-value=\"{}\">{}</dd>", full(r.grand_mean),
                     num(r.grand_mean));
    for (const CvRow& c : r.cv)
        o += fmt::format("<dt>CV{}</dt><dd data-key=\"cv\" data-error=\"{}\" data-value=\"{}\">{:.2f} %</dd>",
                         r.cv.size() > 1 ? " (" + esc(c.error) + ")" : "", esc(c.error), full(c.cv_percent),
                         c.cv_percent);
    if (r.sed)
        o += fmt::format("<dt>SED</dt><dd data-key=\"sed\" data-value=\"{}\">{}</dd>", full(*r.sed), num(*r.sed));
    if (r.lsd_5pct)
        o += fmt::format("<dt>LSD (5 %)</dt><dd data-key=\"lsd_5pct\" data-value=\"{}\">{}</dd>", full(*r.lsd_5pct),
                         num(*r.lsd_5pct));
    for (const Efficiency& e : r.efficiency)
        o += fmt::format("<dt>relative efficiency vs {}</dt><dd data-key=\"efficiency\" data-value=\"{}\">{:.3f}{}</dd>",
                         esc(e.versus), full(e.re), e.re,
                         e.df_factor ? fmt::format(" (df-adjusted {:.3f})", e.re_adjusted) : "");
    if (r.paired) {
        const PairedTest& p = *r.paired;
        o += fmt::format("<dt>paired t-test</dt><dd>{} − {}, {} pairs: mean difference {}, t = {:.4f} on {} df, "
                         "p = {}, 95 % CI {} to {}</dd>",
                         esc(lab(p.first)), esc(lab(p.second)), p.pairs, num(p.mean_difference), p.t, p.df,
                         p_text(p.p), num(p.ci_lower), num(p.ci_upper));
    }
    o += "</dl>\n";
    if (!r.aliased.empty()) {
        o += "<p><strong>Aliased terms:</strong></p><ul>";
        for (const AliasedTerm& a : r.aliased)
            o += fmt::format("<li data-term=\"{}\">{}: {} df of {} expected{}</li>", esc(a.term), esc(a.term), a.df,
                             a.df_expected, lab.blind() ? "" : " (" + esc(a.message) + ")");
        o += "</ul>\n";
    }
    if (!r.standard_errors.empty()) {
        o += "<div class=\"scroll\"><table class=\"sed\"><thead><tr><th>difference of</th><th class=\"num\">SED</th>"
             "<th class=\"num\">t</th><th class=\"num\">LSD (5 %)</th></tr></thead><tbody>";
        for (const SedRow& s : r.standard_errors)
            o += fmt::format("<tr><td>{}</td>{}<td class=\"num\">{}</td>{}</tr>", esc(s.comparison), cell(s.sed),
                             s.df ? fmt::format("{:.3f} ({} df)", s.t_critical, *s.df)
                                  : fmt::format("{:.3f} (weighted)", s.t_critical),
                             cell(s.lsd_5pct));
        o += "</tbody></table></div>\n";
    }
    return o;
}

std::string data_quality(const TraitView& v, const AnalysisResult* r) {
    std::string o = "<h3>Data quality</h3>\n<ul class=\"quality\">";
    int items = 0;
    if (r) {
        for (const PlotFit& f : r->plots) {
            const auto& z = f.standardized;
            if (!z || std::fabs(*z) <= 3) continue;
            o += fmt::format("<li class=\"outlier\" data-plot=\"{}\">plot {} ({}): standardized residual {:+.2f}, value "
                             "{}, the model predicts {}</li>",
                             esc(f.plot), esc(f.plot), esc(v.lab(f.treatment)), *z, f.y ? num(*f.y) : "–",
                             num(f.fitted));
            ++items;
        }
        std::vector<std::pair<int, std::string>> ids;  // observed plots with leverage 1, in plot order
        for (const PlotFit& f : r->plots)
            if (f.y && !f.standardized && f.leverage && *f.leverage == 1) ids.emplace_back(std::atoi(f.plot.c_str()), f.plot);
        std::sort(ids.begin(), ids.end());
        std::string lone;
        for (const auto& id : ids) lone += (lone.empty() ? "" : ", ") + esc(id.second);
        const std::size_t n_lone = ids.size();
        if (n_lone > 0) {
            o += fmt::format("<li class=\"leverage\">plot{} {}: leverage 1 (the plot alone fixes its fitted value, "
                             "e.g. an entry in a single plot), residual 0, no standardized residual: cannot be "
                             "flagged as an outlier</li>",
                             n_lone == 1 ? "" : "s", lone);
            ++items;
        }
    }
    for (const auto& [plot, evs] : v.flags) {
        for (const PlotEvent* e : evs) {
            const bool kept = e->state != PlotState::Missing;
            o += fmt::format("<li class=\"flagged\" data-plot=\"{}\">plot {} flagged <strong>{}</strong>{}: {}</li>",
                             plot, plot, esc(e->flag.empty() ? to_string(e->state) : e->flag),
                             esc(e->reason.empty() ? "" : " (" + e->reason + ")"),
                             kept ? (v.latest.count(plot) ? "its value is kept and analysed" : "no value recorded")
                                  : "treated as missing");
            ++items;
        }
    }
    if (r) {
        for (std::size_t i = 0; i < r->plots.size(); ++i) {
            const PlotFit& f = r->plots[i];
            if (f.y) continue;
            auto why = v.s.missing_why.find(i);
            o += fmt::format("<li class=\"missing\" data-plot=\"{}\">missing plot {} ({}){}: estimated as {} (least "
                             "squares{})</li>",
                             esc(f.plot), esc(f.plot), esc(v.lab(f.treatment)),
                             why == v.s.missing_why.end() ? "" : ", " + esc(why->second), num(f.fitted),
                             r->design == "rcbd" ? ", = Yates' estimate" : "");
            ++items;
        }
    } else {
        for (const PlotPlacement& p : v.in.layout.plots) {
            if (v.latest.count(p.id)) continue;
            o += fmt::format("<li class=\"missing\" data-plot=\"{}\">plot {}: no value</li>", p.id, p.id);
            ++items;
        }
    }
    if (!v.lab.blind()) {
        for (const std::string& n : v.s.notes) {
            if (n.find(" flagged ") != std::string::npos) continue;  // listed with the flags above
            o += "<li class=\"note\">" + esc(n) + "</li>";
            ++items;
        }
    }
    if (items == 0) o += "<li>no residual beyond ±3, no flagged or missing plot</li>";
    o += "</ul>\n";
    return o;
}

std::string time_chart(const TraitView& v, const AnalysisResult& r) {
    std::vector<TimePoint> pts;
    for (const PlotFit& f : r.plots) {
        const auto& z = f.standardized;
        auto it = v.latest.find(std::atoi(f.plot.c_str()));
        if (!z || it == v.latest.end()) continue;
        const auto t = utc_seconds(it->second->obs.recorded_utc);
        if (!t) continue;
        pts.push_back(TimePoint{f.plot, *t, *z, it->second->obs.observer + " · " + it->second->obs.device});
    }
    if (pts.size() < 2) return "";
    std::stable_sort(pts.begin(), pts.end(), [](const TimePoint& a, const TimePoint& b) { return a.seconds < b.seconds; });
    return fmt::format("<figure><div class=\"scroll\">{}</div><figcaption>Standardized residual of each plot against the time its value was "
                       "recorded (UTC), one shape per observer and device. A drift or a step along the day (a scale "
                       "warming up, a tired eye, a change of observer) shows as a trend; dashed lines at ±3."
                       "</figcaption></figure>\n",
                       time_residual_svg(pts));
}

std::string plot_table(const TraitView& v, const AnalysisResult* r) {
    std::string o = fmt::format("<details><summary>Every plot's value{}</summary><div class=\"scroll\"><table "
                                "class=\"plots\" data-trait=\"{}\"><thead><tr><th>plot</th><th>block</th><th>treatment"
                                "</th><th class=\"num\">value</th>{}<th>recorded (UTC)</th><th>observer</th><th>device"
                                "</th></tr></thead><tbody>\n",
                                r ? ", fitted value and residual" : "", esc(v.s.trait.name),
                                r ? "<th class=\"num\">fitted</th><th class=\"num\">residual</th><th class=\"num\">"
                                    "standardized</th>"
                                  : "");
    std::map<int, const PlotFit*> fits;
    if (r)
        for (const PlotFit& f : r->plots) fits[std::atoi(f.plot.c_str())] = &f;
    for (const PlotPlacement& p : v.in.layout.plots) {
        auto it = v.latest.find(p.id);
        const ObservationRecord* rec = it == v.latest.end() ? nullptr : it->second;
        o += fmt::format("<tr data-plot=\"{}\"><td>{}</td><td>{}</td><td>{}</td>", p.id, p.id, p.block,
                         esc(v.lab(v.in.spec.treatments.at(static_cast<std::size_t>(p.treatment)).label)));
        o += rec && rec->obs.number ? cell(rec->obs.number, esc(rec->obs.value)) : "<td class=\"num\">missing</td>";
        if (r) {
            auto f = fits.find(p.id);
            if (f != fits.end()) {
                o += cell(f->second->fitted);
                o += cell(f->second->residual, f->second->residual ? num(*f->second->residual) : "");
                const auto& z = f->second->standardized;
                o += z                     ? cell(z, fmt::format("{:+.2f}", *z))
                     : f->second->residual ? std::string("<td class=\"num\" title=\"leverage 1: the plot alone fixes "
                                                         "its fitted value\">none (h = 1)</td>")
                                           : cell(z, "");
            } else {
                o += "<td></td><td></td><td></td>";
            }
        }
        o += rec ? fmt::format("<td>{}</td><td>{}</td><td>{}</td>", esc(rec->obs.recorded_utc), esc(rec->obs.observer),
                               esc(rec->obs.device))
                 : "<td></td><td></td><td></td>";
        o += "</tr>\n";
    }
    o += "</tbody></table></div></details>\n";
    return o;
}

std::string trait_section(const TraitSection& s, const ReportInput& in, const Labels& lab, const MapModel* model) {
    TraitView v{s, in, lab, {}, {}};
    for (const ObservationRecord& rec : s.computed_how.empty() ? in.observations : s.computed) {
        if (rec.obs.trait != s.trait.name || !rec.obs.number) continue;
        auto [it, fresh] = v.latest.emplace(rec.obs.plot, &rec);
        if (!fresh && rec.id > it->second->id) it->second = &rec;
    }
    for (const PlotEvent& e : in.events) v.flags[e.plot].push_back(&e);
    const std::size_t plots = in.layout.plots.size();
    std::string o = fmt::format("<section class=\"trait\" id=\"trait-{}\" data-trait=\"{}\">\n<h2>{}</h2>\n"
                                "<p class=\"sub\">{} <code>{}</code>, {}; {} on {} of {} plots</p>\n",
                                esc(s.trait.name), esc(s.trait.name), esc(trait_title(s.trait)),
                                s.computed_how.empty() ? "trait" : "yield", esc(s.trait.name),
                                to_string(s.trait.kind), s.computed_how.empty() ? "recorded" : "computed",
                                v.latest.size(), plots);
    if (!s.computed_how.empty())
        o += fmt::format("<p class=\"computed\">Computed from the recorded values: {}.</p>\n", esc(s.computed_how));
    const AnalysisResult* r = s.analysis ? &*s.analysis : nullptr;
    if (!r)
        o += fmt::format("<p class=\"refused\"><strong>Not analysed:</strong> {}</p>\n",
                         esc(s.not_analysed.empty() ? "no analysis" : s.not_analysed));
    if (model && !v.latest.empty()) {
        o += "<div class=\"pair\">" + value_map(v, *model);
        if (r) o += residual_map(v, *model, *r);
        o += "</div>\n";
    }
    if (r) {
        const MeansTable& t = r->means.at(0);
        o += fmt::format("<h3>{} means</h3>\n", t.term == "treatment" ? "Treatment" : esc(t.term));
        if (t.error_df >= 1) {
            const MeansChart chart = means_chart(t, t_quantile(0.975, t.error_df), s.trait.unit, lab.map());
            o += fmt::format("<figure><div class=\"scroll\">{}</div><figcaption>{}</figcaption></figure>\n", means_chart_svg(chart),
                             esc(chart.caption));
        }
        o += means_table(t, s.trait, lab);
        for (std::size_t k = 1; k < r->means.size(); ++k) {
            o += fmt::format("<h3>Means of {}</h3>\n", esc(r->means[k].term));
            o += means_table(r->means[k], s.trait, lab);
        }
        o += "<h3>Analysis of variance</h3>\n" + anova_table(s, *r, lab) + summary(*r, lab);
    }
    o += data_quality(v, r);
    if (r) o += time_chart(v, *r);
    o += plot_table(v, r);
    o += "</section>\n";
    return o;
}

std::string facts(const ReportInput& in, const Labels& lab) {
    const TrialSpec& sp = in.spec;
    std::string o = "<section id=\"trial\">\n<h2>The trial</h2>\n<dl class=\"facts\">";
    auto fact = [&](const std::string& key, const std::string& html) {
        o += fmt::format("<dt>{}</dt><dd data-fact=\"{}\">{}</dd>", esc(key), esc(key), html);
    };
    fact("code", esc(sp.code));
    if (!sp.title.empty()) fact("title", esc(sp.title));
    if (!sp.site.empty()) fact("site", esc(sp.site));
    if (!sp.crop.empty()) fact("crop", esc(sp.crop));
    std::string design = fmt::format("{} ({})", design_name(sp.design), esc(sp.design));
    if (sp.blocks) design += fmt::format(", {} {}", sp.blocks, sp.design == "paired" ? "pairs" : "blocks");
    if (sp.replicates) design += fmt::format(", {} replicates", sp.replicates);
    if (sp.block_size) design += fmt::format(", {} plots per incomplete block", sp.block_size);
    fact("design", design);
    std::string trts = fmt::format("{}", sp.treatments.size());
    if (!lab.blind()) {
        std::vector<std::string> names;
        for (const TreatmentSpec& t : sp.treatments) names.push_back(esc(t.label) + (t.check ? " (check)" : ""));
        trts += ": " + fmt::format("{}", fmt::join(names, ", "));
    } else {
        trts += fmt::format(", shown as T1 to T{} (blind copy)", sp.treatments.size());
    }
    fact("treatments", trts);
    std::string size = fmt::format("{:g} m × {:g} m", sp.field.plot_length_m, sp.field.plot_width_m);
    if (sp.field.harvest_length_m || sp.field.harvest_width_m)
        size += fmt::format("; harvest area {:g} m × {:g} m", sp.field.harvest_length_m.value_or(sp.field.plot_length_m),
                            sp.field.harvest_width_m.value_or(sp.field.plot_width_m));
    fact("plot size", size);
    fact("plots", fmt::format("{}{}", in.layout.plots.size(),
                              in.layout.guards.empty() ? "" : fmt::format(" and {} guard plots", in.layout.guards.size())));
    fact("seed", fmt::format("{} ({})", in.layout.seed, esc(in.layout.algorithm)));
    fact("layout certificate", in.certificate_sha256 ? "SHA-256 <code>" + esc(*in.certificate_sha256) + "</code>"
                                                     : std::string("not stored with this trial"));
    if (!in.created_utc.empty()) fact("designed", esc(in.created_utc));
    fact("blind", sp.blind ? "yes: the handheld never shows treatments" : "no");

    std::string first, last;
    std::set<std::string> devices, observers;
    std::set<int> recorded;
    for (const ObservationRecord& r : in.observations) {
        if (first.empty() || r.obs.recorded_utc < first) first = r.obs.recorded_utc;
        if (last.empty() || r.obs.recorded_utc > last) last = r.obs.recorded_utc;
        devices.insert(r.obs.device);
        observers.insert(r.obs.observer);
        recorded.insert(r.obs.plot);
    }
    fact("observations", in.observations.empty() ? std::string("none yet")
                                                 : fmt::format("{} current values, first {}, last {}",
                                                               in.observations.size(), esc(first), esc(last)));
    auto joined = [](const std::set<std::string>& s) {
        std::vector<std::string> e;
        for (const auto& x : s) e.push_back(esc(x));
        return fmt::format("{}", fmt::join(e, ", "));
    };
    if (!devices.empty()) fact("devices", joined(devices));
    if (!observers.empty()) fact("observers", joined(observers));
    fact("plots recorded", fmt::format("<span data-value=\"{}\">{}</span> of {}", recorded.size(), recorded.size(),
                                       in.layout.plots.size()));
    std::vector<std::string> other;
    for (const TraitSpec& t : sp.traits)
        if (t.kind == TraitKind::Date || t.kind == TraitKind::Text)
            other.push_back(fmt::format("{} ({})", esc(t.label.empty() ? t.name : t.label), to_string(t.kind)));
    if (!other.empty())
        fact("not analysed", fmt::format("{}: dates and notes have no analysis of variance", fmt::join(other, ", ")));
    o += "</dl>\n";

    // Flagged plots, by flag.
    o += "<h3>Flagged plots</h3>\n";
    if (in.events.empty()) {
        o += "<p>No plot was flagged.</p>\n";
    } else {
        o += "<div class=\"scroll\"><table class=\"flags\"><thead><tr><th>flag</th><th>meaning</th><th>plot</th>"
             "<th>note</th><th>recorded (UTC)</th><th>by</th></tr></thead><tbody>\n";
        std::vector<const PlotEvent*> evs;
        for (const PlotEvent& e : in.events) evs.push_back(&e);
        std::stable_sort(evs.begin(), evs.end(), [](const PlotEvent* a, const PlotEvent* b) { return a->flag < b->flag; });
        for (const PlotEvent* e : evs) {
            const std::string name = e->flag.empty() ? to_string(e->state) : e->flag;
            std::string label = name;
            for (const FlagSpec& f : sp.flags)
                if (f.name == name && !f.label.empty()) label = f.label;
            o += fmt::format("<tr data-flag=\"{}\" data-plot=\"{}\"><td>{}</td><td>{}</td><td>{}</td><td>{}</td>"
                             "<td>{}</td><td>{}</td></tr>\n",
                             esc(name), e->plot, esc(label),
                             e->state == PlotState::Missing ? "treated as missing" : "values kept", e->plot,
                             esc(e->reason), esc(e->recorded_utc), esc(e->observer + " · " + e->device));
        }
        o += "</tbody></table></div>\n";
    }
    o += "</section>\n";
    return o;
}

std::string methods(const ReportInput& in) {
    const std::string& d = in.spec.design;
    std::string o = "<section id=\"methods\">\n<h2>Methods</h2>\n";
    o += fmt::format(
        "<p>Each numeric trait (numbers, counts, scores) is analysed by the model of the {} the trial was laid out "
        "with: y = {}. The model is fitted by least squares; each term's sum of squares is sequential (after the "
        "terms above it in the table), and each F is tested against the error of its own stratum. A plot without a "
        "value is left out of the fit and gets the model's prediction (for a randomized complete block design this "
        "is Yates' (1933) missing-plot estimate); the residual degrees of freedom drop by one for each. Treatment "
        "means are least-squares means with their standard errors; the 95 % interval of a mean is mean ± t(0.975; "
        "error df)·s.e. Fisher's least significant difference is t(0.975; df)·SED; the letters come from Tukey's "
        "honestly significant difference at 5 % (Tukey 1953; Tukey–Kramer for unequal standard errors, the "
        "studentized range after Copenhaver &amp; Holland 1988), grouped by the insert-and-absorb algorithm of "
        "Piepho (2004): means sharing a letter do not differ. The relative efficiency of blocking compares the "
        "design's error with that of a completely randomized design of the same plots (Gomez &amp; Gomez 1984, "
        "ch. 2). The CV is 100·√MS(error)/grand mean; it is a contested measure of trial quality (Bowman 2001) and "
        "is shown beside the error mean square.</p>\n",
        design_name(d), design_model(d));
    o += "<p>A standardized residual is R's <code>rstandard</code>, the internally studentized residual "
         "e<sub>i</sub> / √(MS<sub>error</sub>·(1 − h<sub>ii</sub>)): the residual divided by its own standard "
         "error, with MS of the plot-level error and h<sub>ii</sub> the plot's leverage, the diagonal of the hat "
         "matrix X(X′X)<sup>−</sup>X′ of the fitted model (Kutner et al. 2005, §10.2; Cook &amp; Weisberg 1982). "
         "For split and strip plots that model holds the whole-plot (strip) strata as fixed block × factor terms. "
         "A plot whose leverage is 1 (an entry in a single plot) has residual 0 and no standardized residual. A "
         "plot with |standardized residual| &gt; 3 is flagged as an outlier, worth a look in the field book. The "
         "same numbers, with each plot's leverage, are printed by <code>plotwright analyze --json</code>; "
         "docs/analysis.md gives every formula with its source.</p>\n";
    o += "<p>Sources: K. A. Gomez and A. A. Gomez, <i>Statistical Procedures for Agricultural Research</i>, 2nd ed., "
         "Wiley, 1984. F. Yates, The analysis of replicated experiments when the field results are incomplete, "
         "<i>Empire Journal of Experimental Agriculture</i> 1 (1933). W. T. Federer, Augmented designs, <i>Hawaiian "
         "Planters' Record</i> 55 (1956). J. W. Tukey, The problem of multiple comparisons (1953). H.-P. Piepho, An "
         "algorithm for a letter-based representation of all-pairwise comparisons, <i>J. Comput. Graph. Stat.</i> 13 "
         "(2004). M. H. Kutner, C. J. Nachtsheim, J. Neter, W. Li, <i>Applied Linear Statistical Models</i>, 5th ed., "
         "2005. R. D. Cook, S. Weisberg, <i>Residuals and Influence in Regression</i>, Chapman &amp; Hall, 1982. "
         "Colour scales: C. A. Brewer, ColorBrewer (Harrower &amp; Brewer 2003).</p>\n";
    o += "</section>\n";
    return o;
}

// Unresolved sync conflicts: every value in force, with who recorded it and when, so that the station
// manager can settle each one (`plotwright resolve`, docs/station.md).
std::string conflicts_section(const ReportInput& in) {
    std::string o = "<section id=\"conflicts\">\n<h2>Unresolved sync conflicts</h2>\n";
    if (in.conflicts.empty()) {
        o += "<p data-conflicts=\"0\">None: every plot and trait holds one value.</p>\n</section>\n";
        return o;
    }
    o += fmt::format("<p data-conflicts=\"{}\"><strong>{} plot/trait{} with disagreeing values</strong> from the "
                     "handhelds. They are left out of the analyses below until the station resolves them with "
                     "<code>plotwright resolve</code>.</p>\n",
                     in.conflicts.size(), in.conflicts.size(), in.conflicts.size() == 1 ? "" : "s");
    o += "<div class=\"scroll\"><table class=\"conflicts\"><thead><tr><th>plot</th><th>trait</th><th>value</th>"
         "<th>recorded (UTC)</th><th>by</th></tr></thead><tbody>\n";
    for (const UnresolvedConflict& c : in.conflicts)
        for (const ObservationRecord& v : c.values)
            o += fmt::format("<tr data-plot=\"{}\" data-trait=\"{}\"><td>{}</td><td>{}</td><td>{}</td><td>{}</td>"
                             "<td>{}</td></tr>\n",
                             c.plot, esc(c.trait), c.plot, esc(c.trait), esc(v.obs.value), esc(v.obs.recorded_utc),
                             esc(v.obs.observer + " · " + v.obs.device));
    o += "</tbody></table></div>\n</section>\n";
    return o;
}

}  // namespace

std::string compose_report_html(const ReportInput& in) {
    const Labels lab(in.spec, in.blind);
    const TrialSpec& sp = in.spec;
    std::string o = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
                    "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
    o += fmt::format("<title>{}{}: trial report</title>\n", esc(sp.code), sp.title.empty() ? "" : " " + esc(sp.title));
    o += fmt::format("<style>{}</style>\n</head>\n<body>\n", kCss);
    o += fmt::format("<header>\n<h1>{}</h1>\n<p class=\"sub\">Trial {}{}{} · {}</p>\n", esc(sp.title.empty() ? sp.code : sp.title),
                     esc(sp.code), sp.site.empty() ? "" : " · ", esc(sp.site), design_name(sp.design));
    o += fmt::format("<p class=\"sub\">Report written {} by {}{}</p>\n</header>\n", esc(in.generated_utc), esc(in.program),
                     in.blind ? ". Blind copy: treatments are shown as T1, T2, … only"
                              : ". Station copy: treatments are named");
    MapModel model;
    bool have_model = true;
    try {
        model = build_map_model(sp, in.layout, MapOptions{});
    } catch (const std::exception&) {
        have_model = false;  // a layout without plots: no map, the sections still say what there is
    }
    o += "<nav><strong>Contents</strong><ul><li><a href=\"#trial\">The trial</a></li>"
         "<li><a href=\"#conflicts\">Sync conflicts</a></li>";
    for (const TraitSection& s : in.traits)
        o += fmt::format("<li><a href=\"#trait-{}\">{}</a>{}</li>", esc(s.trait.name), esc(trait_title(s.trait)),
                         s.analysis ? "" : " (not analysed)");
    o += "<li><a href=\"#methods\">Methods</a></li></ul></nav>\n";
    o += facts(in, lab);
    o += conflicts_section(in);
    for (const TraitSection& s : in.traits) o += trait_section(s, in, lab, have_model ? &model : nullptr);
    if (in.traits.empty()) o += "<p>The trial has no numeric trait to analyse.</p>\n";
    o += methods(in);
    o += fmt::format("<footer><p class=\"sub\">{} · {}</p></footer>\n</body>\n</html>\n", esc(in.program),
                     esc(sp.code));
    return o;
}

}  // namespace pw::report
