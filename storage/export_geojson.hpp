// The plots as GeoJSON (RFC 7946) for GIS tools and web maps: one Feature per plot, a Polygon of its four
// corners in WGS 84 longitude/latitude, with its facts and its resolved values as properties.
#pragma once
#include <string>

namespace pw {

class Store;

// A FeatureCollection (RFC 7946) of the trial's plots in walking order.
//   geometry    Polygon, one exterior ring: the plot's corners c1 c2 c3 c4 c1 (core/field/stakeout.hpp),
//               counter-clockwise (RFC 7946 §3.1.6 right-hand rule), closed, [longitude, latitude] with 8
//               decimals (about 1 mm); corners through the tangent plane at the stake (core/field/geodesy.hpp)
//   properties  plot, block, row, col, walk_order, treatment (left out on a blind trial), then for each
//               trait of the trial (the spec's, then those added at the station) with a resolved value of the
//               plot (storage/sync_conflicts.hpp: the value in force, several equal values once), that value
//               under the trait's name: a number for number, count and score traits, else text. A plot/trait
//               in unresolved conflict has no value here (as in csv-wide). A trait named like one of the
//               fixed properties is written as "trait_<name>".
//   bbox        [west, south, east, north] of all plots
//   unresolved_conflicts, conflicts   foreign members (RFC 7946 §6.1) as in the json export: how many
//               plot/traits in conflict were left out, and [{"plot", "trait"}] of each
// No "crs" member (RFC 7946 dropped it; WGS 84 is implied). Throws SpecError naming the spec file and
// field.origin when the spec gives no WGS 84 position of the reference stake.
std::string export_plots_geojson(const Store& store);

}  // namespace pw
