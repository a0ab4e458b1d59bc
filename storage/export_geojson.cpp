// GeoJSON export of the plots (see export_geojson.hpp for the document's shape and RFC 7946 rules kept).
// The values are the resolved ones (storage/sync_conflicts.hpp), like every other export's.
#include "storage/export_geojson.hpp"

#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "core/error.hpp"
#include "core/field/geodesy.hpp"
#include "core/field/stakeout.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw {
namespace {

// 8 decimals of a degree: 1.1 mm of latitude, less of longitude (RFC 7946 §11.2 suggests 6, about 10 cm,
// which is coarser than a tape; plots of 1-2 m would lose several per cent of their area).
double rounded(double deg) { return std::round(deg * 1e8) / 1e8; }

nlohmann::ordered_json observation_value(const NewObservation& o) {
    if (o.number) return *o.number;
    return o.value;
}

}  // namespace

std::string export_plots_geojson(const Store& store) {
    const StoredTrial& trial = store.trial();
    const TrialSpec& spec = trial.spec;
    if (!spec.field.origin.lat_deg || !spec.field.origin.lon_deg)
        throw SpecError(trial.spec_source, "field.origin",
                        "the spec gives no WGS 84 position of the reference stake (lat_deg, lon_deg); GeoJSON needs "
                        "it to place the plots on the Earth");
    const FieldGeoreference geo(LatLon{*spec.field.origin.lat_deg, *spec.field.origin.lon_deg},
                                spec.field.x_bearing_deg);

    // The resolved value of each (plot, trait): one value in force, or several equal ones; a plot/trait in
    // unresolved conflict has none here (as in csv-wide) and is listed in the document's "conflicts".
    const ResolvedObservations res = resolved_observations(store);
    std::map<std::pair<int, std::string>, const NewObservation*> resolved;
    for (const ObservationRow& r : res.rows) resolved[{r.record.obs.plot, r.record.obs.trait}] = &r.record.obs;
    const std::set<std::string> fixed = {"plot", "block", "row", "col", "walk_order", "treatment"};

    const std::vector<PlotCorner> corners = plot_corners(trial.layout, spec.field.x_bearing_deg);
    nlohmann::ordered_json features = nlohmann::ordered_json::array();
    double west = 180, south = 90, east = -180, north = -90;
    for (std::size_t i = 0; i < trial.layout.plots.size(); ++i) {
        const PlotPlacement& p = trial.layout.plots[i];
        nlohmann::ordered_json ring = nlohmann::ordered_json::array();
        for (std::size_t k = 0; k < 4; ++k) {
            const PlotCorner& c = corners[i * 4 + k];
            const LatLon ll = geo.to_wgs84(c.x_m, c.y_m);
            const double lon = rounded(ll.lon_deg), lat = rounded(ll.lat_deg);
            ring.push_back({lon, lat});
            west = std::min(west, lon);
            east = std::max(east, lon);
            south = std::min(south, lat);
            north = std::max(north, lat);
        }
        ring.push_back(ring.front());  // closed: the first position repeated exactly (RFC 7946 §3.1.6)
        nlohmann::ordered_json props = nlohmann::ordered_json::object();
        props["plot"] = p.id;
        props["block"] = p.block;
        props["row"] = p.row;
        props["col"] = p.col;
        props["walk_order"] = p.walk_order;
        if (!spec.blind) props["treatment"] = spec.treatments.at(static_cast<std::size_t>(p.treatment)).label;
        for (const TraitSpec& t : spec.traits) {
            auto it = resolved.find({p.id, t.name});
            if (it == resolved.end()) continue;
            props[fixed.count(t.name) ? "trait_" + t.name : t.name] = observation_value(*it->second);
        }
        features.push_back({{"type", "Feature"},
                            {"id", p.id},
                            {"properties", props},
                            {"geometry", {{"type", "Polygon"}, {"coordinates", nlohmann::ordered_json::array({ring})}}}});
    }
    // Foreign members (RFC 7946 §6.1), as the json export names them: how many plot/traits in conflict were
    // left out, and which.
    nlohmann::ordered_json conflicts = nlohmann::ordered_json::array();
    for (const Conflict& c : res.conflicts) conflicts.push_back({{"plot", c.plot}, {"trait", c.trait}});
    nlohmann::ordered_json doc = {{"type", "FeatureCollection"},
                                  {"bbox", {west, south, east, north}},
                                  {"unresolved_conflicts", res.conflicts.size()},
                                  {"conflicts", conflicts},
                                  {"features", features}};
    return doc.dump(1) + "\n";
}

}  // namespace pw
