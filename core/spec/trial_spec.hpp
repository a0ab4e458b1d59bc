// The trial specification: what an agronomist writes in a TOML file (layouts/*.toml) before anything is
// randomized. Parsed once at the edge into these types; nothing downstream reads TOML.
//
// Reference: docs/spec.md. Units are in the member names (_m metres, _deg degrees).
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace pw {

enum class TraitKind {
    Number,   // real value with min/max and a number of decimals (grain weight, kg)
    Count,    // non-negative integer with optional min/max (stand count)
    Score,    // ordinal score on an integer scale, e.g. 1..9, optional labels per level
    Date,     // calendar date, ISO 8601 YYYY-MM-DD
    Text,     // free note, at most max_length characters
};

struct TraitSpec {
    std::string name;         // [a-z][a-z0-9_]* , unique within the trial
    std::string label;        // shown to the technician; defaults to name
    std::string unit;         // "kg", "cm", "plants/m", "" for scores and text
    TraitKind kind = TraitKind::Number;
    std::optional<double> min;
    std::optional<double> max;
    int decimals = 2;         // Number: digits kept after the point (more are refused)
    std::vector<std::string> score_labels;  // Score: optional label per level, min..max
    int max_length = 200;     // Text
};

struct TreatmentSpec {
    std::string label;        // unique, shown on maps and (unless blind) on the handheld
    std::string description;
    bool check = false;       // the untreated control or standard variety
};

// One factor of a factorial treatment structure ([[factors]]): the treatments are the crossing of the
// factors' levels, first factor slowest (docs/spec.md).
struct FactorSpec {
    std::string name;                 // "Nitrogen"
    std::vector<std::string> levels;  // "N0", "N60", ... at least 2, unique ignoring case
    std::string role;                 // split/strip: "main" (factor A) or "sub" (factor B); "" elsewhere
};

// Separator between factor levels in the label of a crossed treatment: "N60 × Sorghum A" (the
// multiplication sign U+00D7 in UTF-8, between spaces).
inline constexpr const char* kFactorLabelSeparator = " \xc3\x97 ";

struct GradientSpec {
    double bearing_deg = 0;   // compass bearing (clockwise from north) in which the gradient INCREASES
    std::string label;        // "shade from shelterbelt"
};

// Guard (border) plots, the same size as the trial's plots, outside the randomized plots.
enum class BorderKind {
    None,           // no guard plots
    Around,         // a ring around the whole trial
    GradientEdges,  // a row across the trial at the low and at the high end of the gradient
};

// The reference stake from which the field's x and y axes run. Its position on the Earth is optional.
struct OriginSpec {
    std::optional<double> lat_deg;    // WGS 84 latitude, -90..90 (given together with lon_deg)
    std::optional<double> lon_deg;    // WGS 84 longitude, -180..180
    std::string description;          // "steel post at the south-west corner"
};

struct FieldSpec {
    double plot_length_m = 0; // along the gradient
    double plot_width_m = 0;  // across the gradient
    double alley_m = 0;       // between blocks (and between wrapped rows of one block)
    double plot_gap_m = 0;    // between neighbouring plots within a row
    int plots_per_row = 0;    // 0: a whole block in one row across the gradient (or as many as fit width)
    OriginSpec origin;
    double x_bearing_deg = 90;                // compass bearing of the field's x axis; y is 90° anticlockwise
    std::optional<double> length_m;           // field size along its x axis; the trial must fit
    std::optional<double> width_m;            // field size along its y axis
    BorderKind border = BorderKind::None;
    std::optional<double> harvest_length_m;   // net plot along the gradient, <= plot_length_m, centred
    std::optional<double> harvest_width_m;    // net plot across the gradient, <= plot_width_m, centred
};

// A flag a technician may put on a plot with a note ([[flags]], docs/spec.md): why the plot is not like
// the others (hail damage, lodging, washed out). The flags are data: the spec lists them, and when it
// lists none the trial gets default_flags().
struct FlagSpec {
    std::string name;         // [a-z][a-z0-9_]*, at most 16 characters, unique; stored with the event
    std::string label;        // what the small screen shows, at most 10 characters; defaults to name
    bool missing = false;     // true: the plot's values are treated as missing by analysis and export;
                              // false: the values are kept and the flag is a note beside them
};

// The flags of a trial whose spec has no [[flags]]: damaged (values kept), missing (treated as missing),
// lodged (values kept).
const std::vector<FlagSpec>& default_flags();

// Grain yield computed from recorded traits ([[yields]], docs/spec.md "Yields"): a plot's harvested grain
// weight, adjusted to a standard moisture when the grain's moisture is recorded, per unit of net harvest
// area. Resolved when the spec is read: the traits exist and have the units the formula needs, the moisture
// basis is the spec's or the crop's default (core/traits/yield.hpp), the area is the net harvest area.
enum class YieldUnit {
    TonnesPerHectare,     // "t/ha"
    KilogramsPerHectare,  // "kg/ha"
    KilogramsPerPlot,     // "kg": the moisture-adjusted weight of the plot, no area
};

struct YieldSpec {
    std::string name;                  // like a trait name; unique among traits and yields
    std::string label;                 // defaults to name
    std::string weight;                // a number trait in "kg" or "g": the grain harvested from the plot
    double weight_kg_per_unit = 1;     // 1 for kg, 0.001 for g
    std::string moisture;              // a number trait in "%" (wet basis) with max < 100; "" = not adjusted
    std::optional<double> standard_moisture_pct;  // the basis the weight is adjusted to (with `moisture`)
    std::string basis_origin;          // where the basis comes from: "set in the spec" or the crop default's source
    YieldUnit unit = YieldUnit::TonnesPerHectare;
    double area_m2 = 0;                // net harvest area of one plot (field.harvest_length_m × harvest_width_m);
                                       // 0 for KilogramsPerPlot
};

struct TrialSpec {
    std::string code;         // [A-Z0-9]{2,10}: printed on tags, part of every plot code
    std::string title;
    std::string site;
    std::string crop;
    std::string design = "rcbd";  // crd, rcbd, latin, split, strip, paired, augmented, alpha
    int blocks = 0;               // rcbd, split, strip, augmented: blocks; paired: pairs; else 0
    int replicates = 0;           // crd: plots per treatment; alpha: replicates; else 0
    int block_size = 0;           // alpha: plots per incomplete block; else 0
    bool blind = false;       // never show treatment labels on the handheld
    std::optional<std::uint64_t> seed;
    FieldSpec field;
    GradientSpec gradient;
    std::optional<GradientSpec> second_gradient;  // latin: the gradient the square's columns follow
    std::vector<FactorSpec> factors;              // when given, `treatments` is their crossing
    std::string extra_control;                    // factorial crd/rcbd/latin: one more treatment, last
    std::vector<TreatmentSpec> treatments;        // expanded: the crossing (+ extra control) for factorials
    std::vector<TraitSpec> traits;
    std::vector<FlagSpec> flags = default_flags();  // [[flags]], at most 9 (one key each on the handheld)
    std::vector<YieldSpec> yields;                // [[yields]]: computed, never recorded
};

// Parses TOML text. `source_name` (usually the file path) is used in error messages.
// Throws SpecError naming the line and key of the first problem found.
TrialSpec parse_trial_spec(const std::string& toml_text, const std::string& source_name);

// A trait added to a running trial (`plotwright trait add`, docs/station.md): one [[traits]] table of a file
// that holds [[traits]] tables and nothing else, read by the spec's own trait reader.
struct AddedTraitTable {
    TraitSpec trait;
    std::string toml;   // the table alone as TOML: "[[traits]]" and its keys with their values as given,
                        // without comments; parse_added_traits reads it back to the same trait
};

// Parses the [[traits]] tables of `toml_text` with the same rules and messages as the spec's traits, and
// refuses a name that is already a trait or a yield of `trial`. Throws SpecError naming FILE:LINE and key.
std::vector<AddedTraitTable> parse_added_traits(const std::string& toml_text, const std::string& source_name,
                                                const TrialSpec& trial);

// Adding traits to a blind trial: their texts (label, unit, score labels) reach the handhelds, so none may
// name a treatment or a factor level of `trial` (a whole word, any case). Nothing when the trial is not
// blind. A policy of adding, not of reading: definitions already stored are read without it. Throws
// SpecError naming FILE:LINE and key.
void refuse_treatment_names_in_added_traits(const std::string& toml_text, const std::string& source_name,
                                            const TrialSpec& trial);

// The accepted values of trial.design, in the order docs/spec.md lists them.
const std::vector<std::string>& design_names();

// The treatments of a factorial: every combination of levels, first factor slowest, labels joined by
// kFactorLabelSeparator; then `extra_control` (when not empty) as a check.
std::vector<TreatmentSpec> cross_factors(const std::vector<FactorSpec>& factors, const std::string& extra_control);

const char* to_string(TraitKind kind);
const char* to_string(BorderKind kind);
const char* to_string(YieldUnit unit);        // "t/ha", "kg/ha", "kg"
std::optional<TraitKind> trait_kind_from_string(const std::string& name);

}  // namespace pw
