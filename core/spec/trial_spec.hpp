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

struct GradientSpec {
    double bearing_deg = 0;   // compass bearing (clockwise from north) in which the gradient INCREASES
    std::string label;        // "shade from shelterbelt"
};

struct FieldSpec {
    double plot_length_m = 0; // along the gradient
    double plot_width_m = 0;  // across the gradient
    double alley_m = 0;       // between blocks (and between wrapped rows of one block)
    double plot_gap_m = 0;    // between neighbouring plots within a row
    int plots_per_row = 0;    // 0: a whole block in one row across the gradient
};

struct TrialSpec {
    std::string code;         // [A-Z0-9]{2,10}: printed on tags, part of every plot code
    std::string title;
    std::string site;
    std::string crop;
    std::string design = "rcbd";
    int blocks = 0;
    bool blind = false;       // never show treatment labels on the handheld
    std::optional<std::uint64_t> seed;
    FieldSpec field;
    GradientSpec gradient;
    std::vector<TreatmentSpec> treatments;
    std::vector<TraitSpec> traits;
};

// Parses TOML text. `source_name` (usually the file path) is used in error messages.
// Throws SpecError naming the line and key of the first problem found.
TrialSpec parse_trial_spec(const std::string& toml_text, const std::string& source_name);

const char* to_string(TraitKind kind);
std::optional<TraitKind> trait_kind_from_string(const std::string& name);

}  // namespace pw
