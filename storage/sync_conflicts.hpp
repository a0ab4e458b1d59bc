// Conflicts and the values in force after sync (docs/station.md).
//
// A plot and trait is in conflict when its values in force (Store::current_observations: current, not a
// withdrawal, the plot not flagged as missing) hold more than one distinct value: two handhelds, or one
// handheld twice, recorded different values and none superseded the other. Equal values are no conflict.
// Both observations are kept; the station manager resolves the conflict with a new observation that
// supersedes every value in force (table observation_resolves), carrying the chosen value and the reason.
//
// resolved_observations gives one value per plot and trait for exports and analysis: the single value in
// force, or the agreed value when several observations agree (the earliest recorded of them, ties broken
// by origin, so the choice does not depend on the order bundles arrived in); conflicts are left out and
// listed.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "storage/store.hpp"

namespace pw {

struct ConflictValue {
    ObservationRecord record;   // id, value, device, observer, recorded_utc, note
    std::string origin;         // the handheld it came from ("station" for a value made at the station)
    std::int64_t origin_id = 0; // its id on that handheld
};

struct Conflict {
    int plot = 0;
    std::string trait;
    std::vector<ConflictValue> values;   // oldest recorded first
};

// In walking order, then trait order.
std::vector<Conflict> unresolved_conflicts(const Store& store);
// How many there are, counted in SQL by the view observation_conflict (same rule, no rows read out).
std::size_t count_unresolved_conflicts(const Store& store);

struct ResolvedObservations {
    std::vector<ObservationRow> rows;      // one per plot and trait, walking order then trait order
    std::vector<std::pair<std::string, std::int64_t>> origins;  // rows[i]'s origin and id there
    std::vector<Conflict> conflicts;       // unresolved: left out of `rows`
    std::size_t agreeing = 0;              // plot/traits where several observations agree
};
ResolvedObservations resolved_observations(const Store& store);

struct Resolution {
    int plot = 0;
    std::string trait;
    std::optional<std::string> value;      // the chosen value as typed (checked against the trait), or
    std::optional<std::int64_t> keep;      // the observation whose value is kept
    std::string reason;
    std::string observer;
    std::string now_utc;
};
// Records the resolution; returns the new observation's id. Throws InputError when the plot and trait is
// not in conflict, the value is not acceptable for the trait, or `keep` is not one of the conflicting values.
std::int64_t resolve_conflict(Store& store, const Resolution& r);

}  // namespace pw
