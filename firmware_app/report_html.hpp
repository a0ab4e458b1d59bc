// The trial report: one self-contained HTML file per trial (`plotwright report`, docs/report.md), composed
// here as pure text from what the command reads out of the store. No file, clock or database is touched:
// the caller passes the trial, its current values, flags and each trait's analysis (or why there is none).
//
// The file has no external reference and no script: embedded CSS, inline SVG drawn with viewBox (scales to
// any width), tables in horizontally scrolling boxes, one column under 600 px, page breaks between traits
// when printed. Nothing is told by colour alone: values are printed in the plots, missing plots hatched,
// outlying residuals outlined and marked "!", observers drawn with different shapes.
//
// Every text that comes from the spec or the data is escaped (html_escape) before it reaches the page.
#pragma once
#include <cstddef>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/field/map_model.hpp"
#include "core/record/observation.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/stats/analysis.hpp"

namespace pw::report {

// ---- text -----------------------------------------------------------------------------------------------

// Escapes the five characters with meaning in HTML text and attribute values: & < > " ' (HTML Living
// Standard, 13.1.2.6 and 13.3 "Escaping a string": & first, then the others; ' as &#39;). The result is safe
// in element content and in quoted attribute values.
std::string html_escape(const std::string& text);

// ---- colour scales --------------------------------------------------------------------------------------

struct ColourClass {
    const char* hex;       // "#ffffd9"
    bool light_text;       // white text reads better than black on it (WCAG 2.1 contrast, see report_charts.cpp)
};

// ColorBrewer (C. A. Brewer, www.ColorBrewer.org; Harrower & Brewer 2003, The Cartographic Journal 40(1)):
// the sequential scheme YlGnBu in 9 classes (light to dark) and the diverging scheme RdBu in 11 classes
// (dark red, through near white, to dark blue). Both are marked colour-blind safe by ColorBrewer.
const std::vector<ColourClass>& sequential_scale();  // YlGnBu, 9
const std::vector<ColourClass>& diverging_scale();   // RdBu, 11

// The class of `v` among `classes` equal-width classes from `lo` to `hi` (0 .. classes-1; lo == hi: the middle).
int sequential_class(double v, double lo, double hi, int classes);
// The RdBu class of a standardized residual: class bounds -3, -2, -1.5, -1, -0.5 | 0.5, 1, 1.5, 2, 3; class 0
// holds residuals below -3, class 10 those above 3, class 5 those within ±0.5.
int residual_class(double z);
// Upper bounds of the residual classes 0..9 (class 10 is open above), for the legend.
const std::vector<double>& residual_class_bounds();

// ---- charts ---------------------------------------------------------------------------------------------

// A linear axis: values `min`..`max` drawn from x (or y) `px0` to `px1`, ticks every `step` from `min`.
struct LinearAxis {
    double min = 0, max = 1, step = 1;
    double px0 = 0, px1 = 1;
    double to_px(double v) const;
    std::vector<double> ticks() const;
};
// An axis covering lo..hi with ends on multiples of a 1, 2 or 5 × 10^k step, about `target` ticks.
LinearAxis nice_axis(double lo, double hi, double px0, double px1, int target = 5);

// Means with 95 % intervals (mean ± t(0.975; error df)·se) and letters: one row per mean, dot and whisker.
struct MeanPoint {
    std::string label;
    std::optional<double> mean;   // empty: not estimable (drawn as text)
    double lower = 0, upper = 0;
    std::string letters;
};
struct MeansChart {
    std::vector<MeanPoint> points;
    LinearAxis axis;
    double width = 640, height = 0;
    double label_width = 0;      // left column for the labels
    double row_height = 22;
    std::string unit;
    std::string caption;
};
// `t_critical` = t(0.975; table.error_df); rows without a mean keep their place.
MeansChart means_chart(const MeansTable& table, double t_critical, const std::string& unit,
                       const std::map<std::string, std::string>& relabel = {});
std::string means_chart_svg(const MeansChart& chart);

// The field map coloured by one number per plot. `value` gives the plot's number (empty: missing),
// `text` what to print in the plot; `kind` picks the scale.
struct MapCell {
    std::optional<double> value;
    std::string text;             // value as recorded, or the residual; "" for none. Without a value, a
                                  // non-empty text marks an observed plot with nothing to colour (no
                                  // standardized residual at leverage 1): hatched, printing the text
    bool outlier = false;         // |standardized residual| > 3: thick outline and "!"
    bool flagged = false;         // a flag that keeps the value: dashed inner outline
    std::string title;            // tooltip and accessible name
};
enum class MapScale { Sequential, Diverging };
struct MapColouring {
    MapScale scale = MapScale::Sequential;
    double lo = 0, hi = 0;                // sequential range
    std::map<int, MapCell> cells;         // by plot id
    std::string caption;                  // what the map shows
    std::string unit;
    std::string id;                       // unique in the document: prefixes the SVG's pattern ids
};
std::string field_map_svg(const MapModel& model, const MapColouring& colouring);
std::string map_legend_svg(const MapColouring& colouring);

// Standardized residual against recording time. Points in recording order; shape by observer.
struct TimePoint {
    std::string plot;
    double seconds = 0;           // since 1970-01-01T00:00:00Z
    double z = 0;                 // standardized residual
    std::string observer;         // observer · device, for the shape
};
std::string time_residual_svg(const std::vector<TimePoint>& points);

// Seconds since the epoch of an ISO 8601 UTC time "YYYY-MM-DDTHH:MM:SSZ" (as plotwright stores them);
// empty when the text is not of that form.
std::optional<double> utc_seconds(const std::string& iso);

// ---- the report -----------------------------------------------------------------------------------------

// One trait's section: the analysis, or the reason there is none.
struct TraitSection {
    TraitSpec trait;
    std::optional<AnalysisResult> analysis;
    std::string not_analysed;                         // why, when analysis is empty
    std::map<std::size_t, std::string> missing_why;   // index into analysis->plots
    std::vector<std::string> notes;
    // A yield of the spec ([[yields]]): how it is computed, and its values (recorded traits read theirs
    // from ReportInput::observations).
    std::string computed_how;
    std::vector<ObservationRecord> computed;
};

// A plot and trait whose values from different handhelds (or one handheld twice) disagree and that the
// station has not resolved yet (storage/sync_conflicts.hpp): left out of the analysis until resolved.
struct UnresolvedConflict {
    int plot = 0;
    std::string trait;
    std::vector<ObservationRecord> values;   // oldest recorded first
};

struct ReportInput {
    TrialSpec spec;
    Layout layout;
    std::string created_utc;
    std::optional<std::string> certificate_sha256;
    std::vector<ObservationRecord> observations;      // current values (every trait)
    std::vector<PlotEvent> events;                    // every flag, oldest first
    std::vector<UnresolvedConflict> conflicts;        // unresolved sync conflicts, walking then trait order
    std::vector<TraitSection> traits;                 // numeric traits (number, count, score), then yields,
                                                      // spec order
    std::string generated_utc;                        // when the report was written
    std::string program;                              // "plotwright 0.1.0"
    bool blind = false;                               // treatment labels replaced by T1..Tn (scorers' copy)
};

std::string compose_report_html(const ReportInput& input);

}  // namespace pw::report
