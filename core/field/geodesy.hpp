// The field on the Earth: plot corners in WGS 84 latitude/longitude from the reference stake's position
// and the base line's bearing, and the distance and bearing between two positions. Built on GeographicLib
// (C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43-55, 2013, doi:10.1007/s00190-012-0578-z),
// linked as its own library (pw_geo) so that pw_core needs no GeographicLib.
//
// Choice of method: a LOCAL TANGENT PLANE at the stake (GeographicLib::LocalCartesian, east-north-up on the
// WGS 84 ellipsoid, height 0), not a geodesic from the stake to each corner (Geodesic::Direct). Tapes lay
// the field out as a plane with straight edges and right angles; the tangent plane keeps exactly that
// plane, so every plot is the same rectangle wherever it lies and neighbouring plots share their corners.
// A geodesic from the stake with the corner's distance and bearing puts each point at its true distance
// over the ellipsoid instead; the two differ by about d³/(24 R²) along and d²/(2 R) in height, under a
// millimetre for d of a few hundred metres (R about 6371 km), so either serves for staking; the plane is
// chosen because it keeps the polygons' shape. Accuracy: GeographicLib's conversions are good to
// nanometres; the field's own accuracy is that of the stake's position (docs/agronomist.md).
#pragma once
#include "core/field/stakeout.hpp"

namespace pw {

struct LatLon {
    double lat_deg = 0;
    double lon_deg = 0;
};

// The field frame tied to the Earth: the stake at `stake`, the base line (x axis) at compass bearing
// `x_bearing_deg`. Throws InputError for a latitude outside -90..90 or a longitude outside -180..180.
class FieldGeoreference {
public:
    FieldGeoreference(LatLon stake, double x_bearing_deg);
    // Field frame (metres) to WGS 84 through the tangent plane at the stake.
    LatLon to_wgs84(double x_m, double y_m) const;
    // WGS 84 to east/north metres in the tangent plane at the stake (height ignored).
    EastNorth to_east_north(LatLon p) const;
    LatLon stake() const { return stake_; }
    double x_bearing_deg() const { return x_bearing_deg_; }

private:
    LatLon stake_;
    double x_bearing_deg_;
};

// The geodesic between two WGS 84 positions (Geodesic::Inverse): length in metres and the forward
// azimuth at `from`, degrees clockwise from north in [0, 360).
struct GeodesicLeg {
    double distance_m = 0;
    double azimuth_deg = 0;
};
GeodesicLeg geodesic_inverse(LatLon from, LatLon to);

}  // namespace pw
