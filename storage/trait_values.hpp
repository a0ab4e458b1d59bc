// The value in force of each plot for one trait or one yield of the spec ([[yields]]): what analysis and
// the report read. For a recorded trait, the resolved value (sync_conflicts.hpp) of each plot; for a yield,
// the value computed from the resolved weight and moisture of the plot (core/traits/yield.hpp), dated like
// the later of the two. A plot whose values are in conflict, or whose weight or moisture is, has no value
// here and is named in `conflicts`.
#pragma once
#include <cstddef>
#include <map>
#include <string>

#include "storage/sync_conflicts.hpp"

namespace pw {

struct TraitValues {
    TraitSpec trait;                          // a yield appears as a number trait of its name, label and unit
    const YieldSpec* yield = nullptr;         // the yield (into the store's spec), or null for a recorded trait
    std::map<int, ObservationRecord> values;  // plot → value in force (numeric: number set)
    std::map<int, std::string> conflicts;     // plot → "values in conflict (12.4, 12.9), left out until resolved"
    std::map<int, std::string> not_computed;  // yield: plot → why there is no yield though something was weighed
};

// Throws InputError naming the trait and the names the trial has, when `name` is neither a trait nor a yield.
TraitValues trait_values(const StoredTrial& trial, const ResolvedObservations& resolved, const std::string& name);

}  // namespace pw
