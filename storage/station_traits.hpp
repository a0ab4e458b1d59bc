// Traits added to a running trial at the station (`plotwright trait add`; docs/station.md, docs/sync.md;
// table trait_addition, migration 6).
//
// Invariants:
//   - Nothing recorded changes: the spec text stays exactly as given (the layout certificate and
//     `plotwright verify` rest on it); an added trait is a new row of trait_addition (its [[traits]] table as
//     TOML, who, when, its place) and a new row of trait, in one transaction with its audit entry.
//   - Store::trial().spec.traits is the spec's traits, then the added ones in the order they were added
//     (position); every reader (recorder, exports, analysis, report) sees them there.
//   - Only the station adds traits. A handheld receives them in its station bundle (storage/sync.hpp),
//     never makes one, and never sends one back.
//   - The definition is the trait's table as parse_added_traits (core/spec/trial_spec.hpp) wrote it: no
//     comments, so a blind trial's handheld receives no more than the trait's own keys.
#pragma once
#include <string>
#include <vector>

#include "core/spec/trial_spec.hpp"

struct sqlite3;

namespace pw {

class Store;

struct AddedTrait {
    TraitSpec trait;
    int position = 0;          // trait.position: after the spec's own traits, in the order added
    std::string definition;    // the [[traits]] table as TOML (AddedTraitTable::toml)
    std::string added_utc;
    std::string added_by;
};

// The traits added to the trial, in the order added (empty for a trial without any).
std::vector<AddedTrait> added_traits(const Store& store);

// Adds the [[traits]] tables of `toml_text` (read from `source`, named in messages) to the station's trial,
// recorded as added by `added_by` at `now_utc`, with one audit entry (action "trait"). Throws SpecError
// naming SOURCE:LINE and key for a table the spec's trait reader refuses or a name the trial already has,
// InputError when `store` is a handheld's database or `added_by` is empty. Returns the traits added.
std::vector<AddedTrait> add_traits(Store& store, const std::string& toml_text, const std::string& source,
                                   const std::string& added_by, const std::string& now_utc);

// Storage-internal.
// Appends the added traits stored in `db` to `spec.traits` (each definition read back with
// parse_added_traits); throws StoreError naming `path` when one no longer reads.
void append_added_traits(sqlite3* db, TrialSpec& spec, const std::string& path);
// Inserts the trait_addition row and the trait row of `t`, inside the caller's transaction.
void insert_added_trait(sqlite3* db, const AddedTrait& t);
// Every trait_addition row without its trait row (received in a station bundle), read against `spec` and
// inserted into trait, in position order; returns how many. Throws InputError naming `source`.
std::size_t materialize_added_traits(sqlite3* db, const TrialSpec& spec, const std::string& source);

}  // namespace pw
