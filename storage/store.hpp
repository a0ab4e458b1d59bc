// The trial database: one SQLite file per trial, the single source of truth. Every file plotwright
// writes (tags, CSV, maps) can be regenerated from it.
//
// Schema: docs/schema.md. Versioned by PRAGMA user_version with numbered migrations; STRICT tables,
// foreign keys on, WAL with synchronous=FULL, prepared statements only. Observations and plot events are
// append-only: nothing a user recorded is updated or deleted.
#pragma once
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/record/observation.hpp"
#include "core/spec/trial_spec.hpp"

struct sqlite3;

namespace pw {

struct StoredTrial {
    TrialSpec spec;              // parsed from spec_toml; then the traits added since (migration 6)
    std::string spec_toml;       // the spec text exactly as given
    std::string spec_source;     // file name it came from
    std::string created_utc;
    Layout layout;               // seed and algorithm id included
};

// One current observation joined with its plot's facts, for exports and analysis.
struct ObservationRow {
    ObservationRecord record;
    int block = 0;
    std::string treatment;
    std::string unit;
};

class Store final : public RecordSink {
public:
    // Creates a new database at `path` holding the trial and its layout. Refuses an existing file.
    static Store create(const std::string& path, const std::string& spec_toml, const std::string& spec_source,
                        const TrialSpec& spec, const Layout& layout, const std::string& now_utc);
    // Opens an existing plotwright database, migrating its schema forward. Throws StoreError otherwise.
    static Store open(const std::string& path);

    Store(Store&&) noexcept;
    Store& operator=(Store&&) noexcept;
    ~Store() override;

    const StoredTrial& trial() const;
    // Reads the trial definition again, after traits were added to it (storage/station_traits.hpp).
    void reload_trial();

    // RecordSink: each call is its own committed transaction.
    std::int64_t add_observation(const NewObservation& obs) override;
    void add_plot_event(const PlotEvent& ev) override;
    std::vector<ObservationRecord> current_for_plot(int plot) const override;
    std::vector<PlotEvent> events_for_plot(int plot) const override;

    // The values in force, in plot walking order, then trait order: current observations except
    // withdrawals (undo back to no value) and except every value of a plot flagged with a flag that
    // treats it as missing (plot_event.state 'missing'). Exports, analysis and the recorder read these.
    std::vector<ObservationRow> current_observations() const;
    std::vector<ObservationRecord> history(int plot) const;           // every observation, oldest first
    std::vector<PlotEvent> plot_events() const;                       // oldest first, `flag` filled in
    std::int64_t observation_count() const;                           // all rows, superseded included

    sqlite3* handle() const;     // for storage-internal modules (exports, sync)

private:
    struct Impl;
    explicit Store(std::unique_ptr<Impl> impl);
    std::unique_ptr<Impl> impl_;
};

// The schema version this program writes and understands (PRAGMA user_version of a current database).
int store_schema_version();

// RFC 4180 CSV of the current observations: plot,block,treatment,trait,value,unit,recorded_utc,device,observer
std::string export_observations_csv(const Store& store);
// RFC 4180 CSV of the layout: plot,block,row,col,treatment,x_m,y_m,walk_order,tag, then the design's own
// columns (Layout::columns, e.g. rep,main,sub) in that order
std::string export_plots_csv(const Store& store);

}  // namespace pw
