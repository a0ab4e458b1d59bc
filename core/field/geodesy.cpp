// Field frame <-> WGS 84 through GeographicLib (see geodesy.hpp for the method and its accuracy).
#include "core/field/geodesy.hpp"

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/LocalCartesian.hpp>
#include <fmt/format.h>

#include <cmath>

#include "core/error.hpp"

namespace pw {

FieldGeoreference::FieldGeoreference(LatLon stake, double x_bearing_deg)
    : stake_(stake), x_bearing_deg_(x_bearing_deg) {
    if (!(std::abs(stake.lat_deg) <= 90.0) || !(std::abs(stake.lon_deg) <= 180.0))
        throw InputError(fmt::format("field.origin: the stake's position {} {} is not a WGS 84 latitude (-90..90) "
                                     "and longitude (-180..180)",
                                     stake.lat_deg, stake.lon_deg));
}

LatLon FieldGeoreference::to_wgs84(double x_m, double y_m) const {
    // LocalCartesian: x east, y north, z up from the stake at height 0 on the WGS 84 ellipsoid.
    const GeographicLib::LocalCartesian plane(stake_.lat_deg, stake_.lon_deg, 0.0, GeographicLib::Geocentric::WGS84());
    const EastNorth en = field_to_east_north(x_m, y_m, x_bearing_deg_);
    double lat = 0, lon = 0, h = 0;
    plane.Reverse(en.east_m, en.north_m, 0.0, lat, lon, h);
    return LatLon{lat, lon};
}

EastNorth FieldGeoreference::to_east_north(LatLon p) const {
    const GeographicLib::LocalCartesian plane(stake_.lat_deg, stake_.lon_deg, 0.0, GeographicLib::Geocentric::WGS84());
    double x = 0, y = 0, z = 0;
    plane.Forward(p.lat_deg, p.lon_deg, 0.0, x, y, z);
    return EastNorth{x, y};
}

GeodesicLeg geodesic_inverse(LatLon from, LatLon to) {
    double s12 = 0, azi1 = 0, azi2 = 0;
    GeographicLib::Geodesic::WGS84().Inverse(from.lat_deg, from.lon_deg, to.lat_deg, to.lon_deg, s12, azi1, azi2);
    double a = std::fmod(azi1, 360.0);
    if (a < 0) a += 360.0;
    if (a >= 360.0) a = 0;
    return GeodesicLeg{s12, a};
}

}  // namespace pw
