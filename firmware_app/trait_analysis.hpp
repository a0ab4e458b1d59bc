// The analysis of one trait of a trial database as `plotwright analyze --db` computes it, typed, for the
// commands that compose their own output from it (`plotwright report`). The numbers are the same as the
// analyze command prints: one path from the stored layout and current observations to analyze_trial.
#pragma once
#include <cstddef>
#include <map>
#include <string>
#include <vector>

#include "core/stats/analysis.hpp"

namespace pw {
class Store;
struct TraitValues;
}

namespace pw::app {

struct TraitAnalysis {
    AnalysisResult result;
    std::string unit;                                 // the trait's unit ("" for scores)
    std::map<std::size_t, std::string> missing_why;   // index into result.plots -> why the plot has no value
    std::vector<std::string> notes;                   // the analysis notes and the database's (flagged plots
                                                      // whose values were used, several current values)
};

// The analysis of one trait or yield from its values in force (storage/trait_values.hpp), which the caller
// reads once for all its traits. Throws InputError as `analyze` does: a date or text trait, data the design
// cannot analyse (a treatment without any value, no residual degrees of freedom left).
TraitAnalysis analyze_trait_result(const pw::Store& store, const pw::TraitValues& values);

}  // namespace pw::app
