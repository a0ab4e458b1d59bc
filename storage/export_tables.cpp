// Long, wide and JSON exports of the resolved values (export_tables.hpp).
#include "storage/export_tables.hpp"

#include <map>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"
#include "storage/trait_values.hpp"

namespace pw {
namespace {

std::string trait_heading(const TraitSpec& t) { return t.unit.empty() ? t.name : t.name + " [" + t.unit + "]"; }

// The spec's yields, computed per plot from the resolved values (storage/trait_values.hpp), in spec order.
std::vector<TraitValues> yields_of(const StoredTrial& t, const ResolvedObservations& res) {
    std::vector<TraitValues> out;
    for (const YieldSpec& y : t.spec.yields) out.push_back(trait_values(t, res, y.name));
    return out;
}

}  // namespace

TableExport export_long_csv(const Store& store) {
    const ResolvedObservations res = resolved_observations(store);
    TableExport out;
    out.unresolved = res.conflicts.size();
    out.text = csv_record({"plot", "block", "treatment", "trait", "value", "unit", "recorded_utc", "device", "observer",
                           "observation", "origin", "origin_id"});
    for (std::size_t i = 0; i < res.rows.size(); ++i) {
        const ObservationRow& row = res.rows[i];
        const NewObservation& o = row.record.obs;
        out.text += csv_record({std::to_string(o.plot), std::to_string(row.block), row.treatment, o.trait, o.value, row.unit,
                                o.recorded_utc, o.device, o.observer, std::to_string(row.record.id), res.origins[i].first,
                                std::to_string(res.origins[i].second)});
    }
    return out;
}

TableExport export_wide_csv(const Store& store) {
    const StoredTrial& t = store.trial();
    const ResolvedObservations res = resolved_observations(store);
    std::map<std::pair<int, std::string>, std::string> value;
    for (const ObservationRow& row : res.rows) value[{row.record.obs.plot, row.record.obs.trait}] = row.record.obs.value;
    std::vector<std::string> header = {"plot", "block", "row", "col", "treatment"};
    header.insert(header.end(), t.layout.columns.begin(), t.layout.columns.end());
    for (const TraitSpec& tr : t.spec.traits) header.push_back(trait_heading(tr));
    const std::vector<TraitValues> yields = yields_of(t, res);
    for (const TraitValues& y : yields) header.push_back(trait_heading(y.trait));
    TableExport out;
    out.unresolved = res.conflicts.size();
    out.text = csv_record(header);
    for (const PlotPlacement& p : t.layout.plots) {
        std::vector<std::string> rec = {std::to_string(p.id), std::to_string(p.block), std::to_string(p.row),
                                        std::to_string(p.col),
                                        t.spec.treatments.at(static_cast<std::size_t>(p.treatment)).label};
        for (const std::string& c : t.layout.columns) rec.push_back(std::to_string(design_column(p, c)));
        for (const TraitSpec& tr : t.spec.traits) {
            auto it = value.find({p.id, tr.name});
            rec.push_back(it == value.end() ? "" : it->second);
        }
        for (const TraitValues& y : yields) {
            auto it = y.values.find(p.id);
            rec.push_back(it == y.values.end() ? "" : it->second.obs.value);
        }
        out.text += csv_record(rec);
    }
    return out;
}

TableExport export_json(const Store& store) {
    const StoredTrial& t = store.trial();
    const ResolvedObservations res = resolved_observations(store);
    nlohmann::json traits = nlohmann::json::array();
    for (const TraitSpec& tr : t.spec.traits)
        traits.push_back({{"name", tr.name}, {"label", tr.label}, {"unit", tr.unit}, {"kind", to_string(tr.kind)},
                          {"heading", trait_heading(tr)}});
    nlohmann::json conflicts = nlohmann::json::array();
    for (const Conflict& c : res.conflicts) conflicts.push_back({{"plot", c.plot}, {"trait", c.trait}});
    nlohmann::json obs = nlohmann::json::array();
    for (std::size_t i = 0; i < res.rows.size(); ++i) {
        const ObservationRow& row = res.rows[i];
        const NewObservation& o = row.record.obs;
        obs.push_back({{"plot", o.plot},
                       {"block", row.block},
                       {"treatment", row.treatment},
                       {"trait", o.trait},
                       {"value", o.value},
                       {"number", o.number ? nlohmann::json(*o.number) : nlohmann::json(nullptr)},
                       {"unit", row.unit},
                       {"recorded_utc", o.recorded_utc},
                       {"device", o.device},
                       {"observer", o.observer},
                       {"observation", row.record.id},
                       {"origin", res.origins[i].first},
                       {"origin_id", res.origins[i].second}});
    }
    // Yields: computed, never recorded; each plot's value from the resolved weight and moisture.
    nlohmann::json yields = nlohmann::json::array();
    for (const TraitValues& y : yields_of(t, res)) {
        nlohmann::json values = nlohmann::json::array();
        for (const auto& [plot, rec] : y.values)
            values.push_back({{"plot", plot}, {"value", rec.obs.value}, {"number", *rec.obs.number}});
        yields.push_back({{"name", y.trait.name},
                          {"label", y.trait.label},
                          {"unit", y.trait.unit},
                          {"heading", trait_heading(y.trait)},
                          {"weight", y.yield->weight},
                          {"moisture", y.yield->moisture.empty() ? nlohmann::json(nullptr) : nlohmann::json(y.yield->moisture)},
                          {"standard_moisture_pct", y.yield->standard_moisture_pct
                                                        ? nlohmann::json(*y.yield->standard_moisture_pct)
                                                        : nlohmann::json(nullptr)},
                          {"values", values}});
    }
    nlohmann::json j{{"format", "plotwright-observations/1"},
                     {"trial", {{"code", t.spec.code}, {"title", t.spec.title}, {"design", t.spec.design}, {"blind", t.spec.blind}}},
                     {"traits", traits},
                     {"yields", yields},
                     {"unresolved_conflicts", res.conflicts.size()},
                     {"conflicts", conflicts},
                     {"observations", obs}};
    TableExport out;
    out.unresolved = res.conflicts.size();
    out.text = j.dump(2) + "\n";
    return out;
}

}  // namespace pw
