// The trial report's HTML composition (firmware_app/report_html.hpp): escaping of hostile labels, the map
// showing every plot, the means chart's geometry, the colour scales' contrast, times, blind copies.
// Each check names its outside reference; the report's own end-to-end checks (parsing, R, chromium) are in
// tests/cmake/report.cmake.
#include <catch2/catch.hpp>

#include <cmath>
#include <regex>
#include <set>
#include <string>

#include "core/design/layout.hpp"
#include "core/field/map_model.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/stats/analysis.hpp"
#include "firmware_app/report_html.hpp"

namespace {

using namespace pw;
using namespace pw::report;

// An invented trial whose every label is hostile to HTML.
const char* kHostileSpec = R"TOML(
[trial]
code = "HTML26"
title = "Trial <script>alert('title')</script> & \"quoted\""
site = "Field 'A' & <b>B</b>"
crop = "oats"
design = "rcbd"
blocks = 3
seed = 42

[field]
plot_length_m = 5.0
plot_width_m = 2.0
alley_m = 1.0

[gradient]
bearing_deg = 0
label = "slope <down> & 'north'"

[[treatments]]
label = "<script>alert(1)</script>"

[[treatments]]
label = "A & B \"double\" 'single'"

[[treatments]]
label = "Line <i>3</i>"
check = true

[[traits]]
name = "yield_kg"
label = "Yield <img src=x onerror=alert(2)>"
unit = "kg & g"
kind = "number"
min = 0
max = 20
decimals = 2
)TOML";

struct Trial {
    TrialSpec spec;
    Layout layout;
    AnalysisResult result;
    std::vector<ObservationRecord> obs;
};

// Invented values: treatment effect, block effect and a fixed scatter per plot.
Trial hostile_trial(const std::vector<std::string>& labels = {}) {
    Trial t;
    t.spec = parse_trial_spec(kHostileSpec, "hostile.toml");
    for (std::size_t i = 0; i < labels.size(); ++i) t.spec.treatments[i].label = labels[i];
    t.layout = design_trial(t.spec, 42);
    TrialData d;
    d.design = "rcbd";
    std::int64_t id = 0;
    for (const PlotPlacement& p : t.layout.plots) {
        const double y = 8 + 1.5 * p.treatment + 0.4 * p.block + 0.1 * ((p.id * 7) % 5);
        d.plot.push_back(std::to_string(p.id));
        d.treatment.push_back(t.spec.treatments[static_cast<std::size_t>(p.treatment)].label);
        d.block.push_back(std::to_string(p.block));
        d.y.push_back(y);
        ObservationRecord r;
        r.id = ++id;
        r.obs.plot = p.id;
        r.obs.trait = "yield_kg";
        r.obs.value = std::to_string(y);
        r.obs.number = y;
        r.obs.recorded_utc = "2026-07-01T08:00:00Z";
        r.obs.device = "device <1>";
        r.obs.observer = "O'Brien & \"Son\"";
        t.obs.push_back(r);
    }
    t.result = analyze_trial(d);
    return t;
}

ReportInput input_of(const Trial& t, bool blind) {
    ReportInput in;
    in.spec = t.spec;
    in.layout = t.layout;
    in.observations = t.obs;
    PlotEvent ev;
    ev.plot = t.layout.plots.front().id;
    ev.state = PlotState::Damaged;
    ev.flag = "damaged";
    ev.reason = "hail </td><script>x</script>";
    ev.recorded_utc = "2026-07-01T08:00:00Z";
    in.events.push_back(ev);
    TraitSection s;
    s.trait = t.spec.traits.front();
    s.analysis = t.result;
    in.traits.push_back(s);
    in.generated_utc = "2026-07-02T09:00:00Z";
    in.program = "plotwright test";
    in.blind = blind;
    return in;
}

std::vector<double> attr_values(const std::string& text, const std::string& pattern) {
    std::vector<double> out;
    const std::regex re(pattern);
    for (auto it = std::sregex_iterator(text.begin(), text.end(), re); it != std::sregex_iterator(); ++it)
        out.push_back(std::stod((*it)[1].str()));
    return out;
}

// WCAG 2.1, "relative luminance" and "contrast ratio" (W3C Recommendation 2018), written out here from the
// definitions to check the text colours the report chose.
double wcag_luminance(const std::string& hex) {
    auto channel = [&](int at) {
        const double c = std::stoi(hex.substr(static_cast<std::size_t>(at), 2), nullptr, 16) / 255.0;
        return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4);
    };
    return 0.2126 * channel(1) + 0.7152 * channel(3) + 0.0722 * channel(5);
}
double wcag_contrast(double l1, double l2) { return (std::max(l1, l2) + 0.05) / (std::min(l1, l2) + 0.05); }

}  // namespace

TEST_CASE("HTML escaping replaces the five characters with meaning in text and attributes", "[report][escape]") {
    // HTML Living Standard, "Escaping a string" (13.3) for & < > and quotes; ' as the numeric reference &#39;.
    CHECK(html_escape("<script>alert('x')</script>") == "&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;");
    CHECK(html_escape("A & B \"c\"") == "A &amp; B &quot;c&quot;");
    // An existing reference is text too: its ampersand is escaped again, so it shows as typed.
    CHECK(html_escape("&amp;") == "&amp;amp;");
    // Bytes of UTF-8 pass unchanged (N60 × Sorghum A, the factor separator of docs/spec.md).
    CHECK(html_escape("N60 \xc3\x97 A") == "N60 \xc3\x97 A");
}

TEST_CASE("A report of a trial whose labels are hostile carries none of them as markup", "[report][escape]") {
    const Trial t = hostile_trial();
    const std::string html = compose_report_html(input_of(t, false));
    // HTML Living Standard: a "<" that starts a tag name would open an element; escaped, none can.
    CHECK(html.find("<script") == std::string::npos);
    CHECK(html.find("<img") == std::string::npos);
    CHECK(html.find("<b>B</b>") == std::string::npos);
    CHECK(html.find("<i>3</i>") == std::string::npos);
    CHECK(html.find("&lt;img src=x onerror=alert(2)&gt;") != std::string::npos);  // shown as text
    // ... and every label is still there, escaped, for the reader.
    CHECK(html.find("&lt;script&gt;alert(1)&lt;/script&gt;") != std::string::npos);
    CHECK(html.find("A &amp; B &quot;double&quot; &#39;single&#39;") != std::string::npos);
    CHECK(html.find("O&#39;Brien &amp; &quot;Son&quot;") != std::string::npos);
    CHECK(html.find("hail &lt;/td&gt;&lt;script&gt;x&lt;/script&gt;") != std::string::npos);
    // No attribute value is closed early by a quote from the data: every data-label holds escaped text only.
    const std::regex attr("data-label=\"([^\"]*)\"");
    for (auto it = std::sregex_iterator(html.begin(), html.end(), attr); it != std::sregex_iterator(); ++it)
        CHECK((*it)[1].str().find_first_of("<>'") == std::string::npos);
}

TEST_CASE("The map SVG has every plot of the layout, with its id", "[report][map]") {
    // Reference: the layout's plot list (core/design/layout.hpp), which the map must show entire.
    const Trial t = hostile_trial();
    const MapModel model = build_map_model(t.spec, t.layout, MapOptions{});
    MapColouring col;
    col.id = "m";
    col.lo = 8;
    col.hi = 12;
    for (const auto& p : t.layout.plots) col.cells[p.id] = MapCell{9.5, "9.5", false, false, ""};
    col.cells.erase(t.layout.plots.back().id);  // one missing plot: still drawn, hatched
    const std::string svg = field_map_svg(model, col);
    for (const auto& p : t.layout.plots) {
        CAPTURE(p.id);
        CHECK(svg.find("data-plot=\"" + std::to_string(p.id) + "\"") != std::string::npos);
        CHECK(svg.find(">" + std::to_string(p.id) + "</text>") != std::string::npos);
    }
    CHECK(svg.find("plot missing") != std::string::npos);
    CHECK(svg.find("url(#m-hatch)") != std::string::npos);
}

TEST_CASE("A plot with leverage 1 is hatched and marked h=1 on the residual map, not called missing",
          "[report][map]") {
    // Reference: docs/report.md, "Field map by standardized residual" (R's rstandard is NaN at h = 1).
    const Trial t = hostile_trial();
    const MapModel model = build_map_model(t.spec, t.layout, MapOptions{});
    MapColouring col;
    col.scale = MapScale::Diverging;
    col.id = "r";
    for (const auto& p : t.layout.plots) col.cells[p.id] = MapCell{0.4, "+0.4", false, false, ""};
    const int lone = t.layout.plots.front().id;
    col.cells[lone] = MapCell{std::nullopt, "h=1", false, false, "plot: leverage 1"};
    const std::string svg = field_map_svg(model, col);
    CHECK(svg.find("class=\"plot undefined\" data-plot=\"" + std::to_string(lone) + "\"") != std::string::npos);
    CHECK(svg.find("plot missing") == std::string::npos);
    CHECK(svg.find(">h=1</text>") != std::string::npos);
    CHECK(map_legend_svg(col).find("h=1: leverage 1") != std::string::npos);
    col.cells[lone] = MapCell{0.4, "+0.4", false, false, ""};
    CHECK(map_legend_svg(col).find("h=1") == std::string::npos);  // named only when such a plot is drawn
}

TEST_CASE("The means chart puts each dot where the axis scale says", "[report][chart]") {
    MeansTable table;
    table.term = "treatment";
    table.error_df = 12;
    const std::vector<std::pair<double, double>> ms = {{10.0, 1.0}, {12.5, 0.5}, {17.0, 1.0}};
    for (std::size_t i = 0; i < ms.size(); ++i) {
        MeanRow r;
        r.label = "T" + std::to_string(i + 1);
        r.mean = ms[i].first;
        r.se = ms[i].second;
        r.hsd_group = i == 2 ? "a" : "b";
        table.rows.push_back(r);
    }
    // t(0.975; 12) from R 4.2.2: sprintf("%.17g", qt(0.975, 12)).
    const double t12 = 2.1788128296672284;
    const std::string svg = means_chart_svg(means_chart(table, t12, "kg"));
    std::smatch m;
    REQUIRE(std::regex_search(svg, m, std::regex("class=\"axis\" x1=\"([0-9.]+)\" x2=\"([0-9.]+)\"")));
    const double x1 = std::stod(m[1].str()), x2 = std::stod(m[2].str());
    const std::vector<double> ticks = attr_values(svg, "class=\"tick\" data-value=\"([-0-9.e+]+)\"");
    REQUIRE(ticks.size() >= 2);
    const double lo = ticks.front(), hi = ticks.back();
    // The axis takes in every interval: 10 − 2.1788 = 7.82 and 17 + 2.1788 = 19.18.
    CHECK(lo <= 10 - t12);
    CHECK(hi >= 17 + t12);
    const std::vector<double> cx = attr_values(svg, "<circle class=\"dot\" cx=\"([0-9.]+)\"");
    REQUIRE(cx.size() == ms.size());
    for (std::size_t i = 0; i < ms.size(); ++i) {
        // Plain arithmetic: a linear scale maps lo..hi onto x1..x2.
        const double want = x1 + (ms[i].first - lo) / (hi - lo) * (x2 - x1);
        CAPTURE(i, want);
        CHECK(std::fabs(cx[i] - want) < 0.006);  // coordinates are written to 0.01
    }
    // Whisker ends at mean ± t·se: the first mean's from 10 − 2.1788 to 10 + 2.1788.
    REQUIRE(std::regex_search(svg, m, std::regex("class=\"whisker\" x1=\"([0-9.]+)\" x2=\"([0-9.]+)\"")));
    CHECK(std::fabs(std::stod(m[1].str()) - (x1 + (10 - t12 - lo) / (hi - lo) * (x2 - x1))) < 0.006);
    CHECK(std::fabs(std::stod(m[2].str()) - (x1 + (10 + t12 - lo) / (hi - lo) * (x2 - x1))) < 0.006);
    CHECK(svg.find(">a</text>") != std::string::npos);
}

TEST_CASE("Text on every colour class meets the WCAG AA contrast of 4.5:1", "[report][colour]") {
    // WCAG 2.1 success criterion 1.4.3: contrast ratio at least 4.5:1 for text.
    for (const auto* scale : {&sequential_scale(), &diverging_scale()}) {
        for (const ColourClass& c : *scale) {
            CAPTURE(c.hex);
            const double l = wcag_luminance(c.hex);
            CHECK(wcag_contrast(l, c.light_text ? 1.0 : 0.0) >= 4.5);
        }
    }
    // A sequential ColorBrewer scheme runs from light to dark (Harrower & Brewer 2003): luminance falls.
    const auto& seq = sequential_scale();
    for (std::size_t k = 1; k < seq.size(); ++k) CHECK(wcag_luminance(seq[k].hex) < wcag_luminance(seq[k - 1].hex));
}

TEST_CASE("Recording times are read as seconds since 1970 UTC", "[report][time]") {
    // GNU date: date -u -d '2026-09-15T07:30:25Z' +%s, and the same for the other two.
    CHECK(utc_seconds("2026-09-15T07:30:25Z") == Approx(1789457425.0).margin(0));
    CHECK(utc_seconds("2024-02-29T23:59:59Z") == Approx(1709251199.0).margin(0));
    CHECK(utc_seconds("1969-12-31T00:00:00Z") == Approx(-86400.0).margin(0));
    CHECK_FALSE(utc_seconds("2026-09-15 07:30:25"));
    CHECK_FALSE(utc_seconds("2026-13-01T00:00:00Z"));
}

TEST_CASE("A blind copy names no treatment and shows codes T1..Tn", "[report][blind]") {
    // Reference: the spec's treatment labels, none of which a scorer's copy may show (docs/report.md).
    const Trial t = hostile_trial({"Variety Alpha", "Variety Beta", "Variety Gamma"});
    const std::string html = compose_report_html(input_of(t, true));
    for (const char* name : {"Alpha", "Beta", "Gamma"}) CHECK(html.find(name) == std::string::npos);
    CHECK(html.find(">T1<") != std::string::npos);
    CHECK(html.find(">T3<") != std::string::npos);
    CHECK(html.find("Blind copy") != std::string::npos);
}

TEST_CASE("A trait that cannot be analysed is reported as such and the report goes on", "[report][refused]") {
    const Trial t = hostile_trial();
    ReportInput in = input_of(t, false);
    in.traits.front().analysis.reset();
    in.traits.front().not_analysed = "treatment X has no observed plot";
    const std::string html = compose_report_html(in);
    CHECK(html.find("Not analysed:</strong> treatment X has no observed plot") != std::string::npos);
    CHECK(html.find("class=\"anova\"") == std::string::npos);
    CHECK(html.find("id=\"methods\"") != std::string::npos);
    CHECK(html.size() > 1000);
    CHECK(html.substr(html.size() - 8) == "</html>\n");
}

TEST_CASE("Unresolved sync conflicts are listed with every disagreeing value, escaped", "[report][conflicts]") {
    const Trial t = hostile_trial();
    ReportInput in = input_of(t, false);
    CHECK(compose_report_html(in).find("data-conflicts=\"0\"") != std::string::npos);

    UnresolvedConflict c;
    c.plot = t.layout.plots.front().id;
    c.trait = t.spec.traits.front().name;
    for (const char* device : {"handheld-1", "handheld-<2>"}) {
        ObservationRecord r;
        r.obs.plot = c.plot;
        r.obs.trait = c.trait;
        r.obs.value = device[9] == '1' ? "5.1" : "5.9";
        r.obs.device = device;
        r.obs.observer = "R. O'Neil";
        r.obs.recorded_utc = "2026-07-01T09:00:00Z";
        c.values.push_back(r);
    }
    in.conflicts.push_back(c);
    const std::string html = compose_report_html(in);
    CHECK(html.find("data-conflicts=\"1\"") != std::string::npos);
    // One row per value in force; the trait's name is hostile too, so it appears escaped.
    const std::string trait = html_escape(c.trait);
    for (const char* value : {"5.1", "5.9"}) {
        const std::string row = "<tr data-plot=\"" + std::to_string(c.plot) + "\" data-trait=\"" + trait +
                                "\"><td>" + std::to_string(c.plot) + "</td><td>" + trait + "</td><td>" + value +
                                "</td>";
        CHECK(html.find(row) != std::string::npos);
    }
    // HTML Living Standard escaping: the device's angle brackets and the observer's quote are text.
    CHECK(html.find("R. O&#39;Neil · handheld-&lt;2&gt;") != std::string::npos);
    CHECK(html.find("handheld-<2>") == std::string::npos);
}
