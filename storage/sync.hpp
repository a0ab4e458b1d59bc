// Station sync: many handhelds, one station database; nothing lost, nothing silently overwritten
// (docs/sync.md for the design and the bundle format, docs/station.md for the station manager).
//
//   provision   the station writes a handheld's own database: the trial (treatment labels replaced by
//               neutral codes when the trial is blind), its plots, traits and flags, and the device's
//               identity (table sync_identity); the station lists the device in sync_device.
//   export      a handheld copies what it recorded since its last export into sync_observation /
//               sync_plot_event under its own name while an SQLite session (sqlite3session_*) records
//               the inserts; the session's changeset is the bundle's payload (core/sync/bundle.hpp).
//               The station's bundle for a handheld is made the same way in an attached in-memory
//               database: every plot event the handheld did not make, and every trait added at the
//               station (trait_addition, storage/station_traits.hpp), which the handheld then records.
//   import      the receiving side checks the bundle (checksum, trial, device, sequence) and reads the whole
//               payload before writing. A handheld applies the station's changeset with
//               sqlite3changeset_apply to its sync_plot_event and trait_addition; the conflict handler never
//               replaces a row (an identical row is skipped, a different one refuses the bundle). The
//               station takes a handheld's rows in with set-based SQL over the payload
//               (storage/changeset_rows.hpp): rows it holds already must be identical (duplicates, left
//               out) or the bundle is refused; plot events and corrections are kept in sync_*, plain values
//               become observations at once. Received rows become observations and plot events of the
//               database, each linked to its origin (observation_origin, plot_event_origin), a correction
//               once what it corrects is there. One transaction per bundle: a refused bundle leaves the
//               database exactly as it was.
//
// Every write here is one BEGIN IMMEDIATE ... COMMIT and appends to the audit log (storage/audit_log.hpp).
#pragma once
#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/sync/bundle.hpp"

namespace pw {

class Store;

// The origin name of rows made at the station itself (no device may take it: valid_device_name).
inline constexpr const char* kStationOrigin = "station";

// The identity stored in a handheld's database; nothing for a station's.
struct DeviceIdentity {
    std::string device;
    std::string trial_digest;     // the station's layout certificate (names the trial in bundles)
    bool blind = false;           // treatment labels were replaced by neutral codes
    std::string provisioned_utc;
};
std::optional<DeviceIdentity> device_identity(const Store& store);

// The digest that names this database's trial in bundles: a handheld's identity digest; at the station,
// the stored layout certificate (computed from the layout when the trial predates certificates).
std::string trial_digest(const Store& store);

struct ProvisionedDevice {
    std::string name;
    std::string provisioned_utc;
    bool blind = false;
    std::string file;
};
std::vector<ProvisionedDevice> provisioned_devices(const Store& station);

struct ProvisionResult {
    std::string device;
    std::string file;
    bool blind = false;
    std::size_t plots = 0;
    std::size_t traits = 0;
};
// Creates the handheld database `out_path` (refused if it exists) and records the device at the station.
// Throws InputError for a bad or already used name, or when `station` is itself a handheld's database.
ProvisionResult provision_device(Store& station, const std::string& device, const std::string& out_path,
                                 const std::string& now_utc);

struct ExportResult {
    BundleHeader header;
    std::size_t observations = 0;
    std::size_t events = 0;
    std::size_t traits = 0;   // the station's bundle: traits added at the station (storage/station_traits.hpp)
    std::string bytes;   // the whole bundle
};
// A handheld's bundle of everything it recorded since its last export (`for_device` empty), or the
// station's bundle for handheld `for_device`. `deliver(bytes)` is called inside the write transaction
// (to write the file): if it throws, nothing is recorded as exported and the next export makes the same
// bundle again.
ExportResult export_bundle(Store& store, const std::string& for_device, const std::string& now_utc,
                           const std::function<void(const std::string&)>& deliver);

struct ImportResult {
    std::string source;
    BundleHeader header;
    bool already_imported = false;        // the same bundle came before: nothing changed
    std::size_t observations = 0;         // rows of the bundle new to this database
    std::size_t events = 0;
    std::size_t traits = 0;               // on a handheld: traits added at the station, new here
    std::size_t duplicates = 0;           // rows of the bundle this database already held, identical
    std::size_t applied = 0;              // observations that became current data in this import
    std::size_t pending = 0;              // received observations still waiting for the one they correct
    std::vector<std::uint64_t> missing_seqs;   // bundles of this device not (yet) received
};
// Imports one bundle. Throws BundleError (bad file) or InputError (another trial, an unknown device, a
// bundle meant for the other side, content that contradicts what was received) naming `source`; the
// database is then unchanged.
ImportResult import_bundle(Store& store, std::string_view bytes, const std::string& source, const std::string& now_utc);

// What a payload holds, checked without a database: every change an INSERT into the sync tables of the
// bundle's direction, with their columns and key, each row of the origin the header allows.
struct PayloadSummary {
    std::size_t observations = 0;
    std::size_t events = 0;
    std::size_t corrections = 0;   // observations that supersede one (corrections and withdrawals)
    std::size_t traits = 0;        // trait_addition rows (the station's bundles only)
    // The lowest and highest origin id among the observations (0 and 0 when there are none).
    std::int64_t lowest_observation_id = 0;
    std::int64_t highest_observation_id = 0;
};
PayloadSummary check_bundle_payload(const Bundle& bundle, const std::string& source);

}  // namespace pw
