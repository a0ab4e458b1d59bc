// CSV exports of a trial database (store.hpp): long-format observations and the plot layout (with the
// text each plot's tag carries, so a list can be checked against scanned tags). The observations are the
// resolved values (storage/sync_conflicts.hpp): one per plot and trait, plot/traits in conflict left out.
// RFC 4180 records through csv_record; one header line naming the columns; CRLF line ends.
// Coordinates are written with 3 decimals (millimetres), enough for tape or RTK staking (DOMAIN: RTK
// GNSS is good to 2-3 cm, common practice).
#include <fmt/format.h>

#include "core/error.hpp"
#include "core/tags/payload.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw {

std::string export_observations_csv(const Store& store) {
    std::string out = csv_record(
        {"plot", "block", "treatment", "trait", "value", "unit", "recorded_utc", "device", "observer"});
    for (const ObservationRow& row : resolved_observations(store).rows) {
        const NewObservation& o = row.record.obs;
        out += csv_record({std::to_string(o.plot), std::to_string(row.block), row.treatment, o.trait, o.value,
                           row.unit, o.recorded_utc, o.device, o.observer});
    }
    return out;
}

std::string export_plots_csv(const Store& store) {
    const StoredTrial& trial = store.trial();
    // The common columns first, in their fixed order; then the design's own (Layout::columns).
    std::vector<std::string> header = {"plot", "block", "row", "col", "treatment", "x_m", "y_m", "walk_order", "tag"};
    header.insert(header.end(), trial.layout.columns.begin(), trial.layout.columns.end());
    std::string out = csv_record(header);
    for (const PlotPlacement& p : trial.layout.plots) {
        // The plot table's foreign key guarantees the index names a treatment of this trial.
        const std::string& label = trial.spec.treatments.at(static_cast<std::size_t>(p.treatment)).label;
        std::vector<std::string> row = {std::to_string(p.id), std::to_string(p.block), std::to_string(p.row),
                                        std::to_string(p.col), label, fmt::format("{:.3f}", p.x_m),
                                        fmt::format("{:.3f}", p.y_m), std::to_string(p.walk_order),
                                        qr_payload(trial.spec.code, p.id)};
        for (const std::string& c : trial.layout.columns) row.push_back(std::to_string(design_column(p, c)));
        out += csv_record(row);
    }
    return out;
}

}  // namespace pw
