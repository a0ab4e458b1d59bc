// Plot corners in stake order and compass arithmetic (see stakeout.hpp for the frame and the order).
#include "core/field/stakeout.hpp"

#include <array>
#include <cmath>
#include <numbers>

namespace pw {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

double wrap_360(double deg) {
    double r = std::fmod(deg, 360.0);
    if (r < 0) r += 360.0;
    return r >= 360.0 ? 0.0 : r;
}

// The 8-point word (sectors 45° wide centred on N, NE, ...).
std::string eight_point(double bearing_deg) {
    static const std::array<const char*, 8> words = {"N", "NE", "E", "SE", "S", "SW", "W", "NW"};
    const int i = static_cast<int>(std::floor(wrap_360(bearing_deg) / 45.0 + 0.5)) % 8;
    return words[static_cast<std::size_t>(i)];
}

}  // namespace

EastNorth field_to_east_north(double x_m, double y_m, double x_bearing_deg) {
    const double s = std::sin(x_bearing_deg * kDeg);
    const double c = std::cos(x_bearing_deg * kDeg);
    return EastNorth{x_m * s - y_m * c, x_m * c + y_m * s};
}

double compass_bearing(double east_m, double north_m) {
    if (east_m == 0 && north_m == 0) return 0;
    return wrap_360(std::atan2(east_m, north_m) / kDeg);
}

double field_direction_bearing(double dx_m, double dy_m, double x_bearing_deg) {
    const EastNorth en = field_to_east_north(dx_m, dy_m, x_bearing_deg);
    return compass_bearing(en.east_m, en.north_m);
}

std::string compass_word(double bearing_deg) {
    static const std::array<const char*, 16> words = {"N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE",
                                                      "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW"};
    const int i = static_cast<int>(std::floor(wrap_360(bearing_deg) / 22.5 + 0.5)) % 16;
    return words[static_cast<std::size_t>(i)];
}

std::vector<PlotCorner> plot_corners(const Layout& layout, double x_bearing_deg) {
    std::vector<PlotCorner> out;
    out.reserve(layout.plots.size() * 4);
    for (const PlotPlacement& p : layout.plots) {
        const double hx = p.width_x_m / 2, hy = p.width_y_m / 2;
        const std::array<std::array<double, 2>, 4> offsets = {{{-hx, -hy}, {hx, -hy}, {hx, hy}, {-hx, hy}}};
        for (int k = 0; k < 4; ++k) {
            PlotCorner c;
            c.plot = p.id;
            c.corner = k + 1;
            c.x_m = p.x_m + offsets[static_cast<std::size_t>(k)][0];
            c.y_m = p.y_m + offsets[static_cast<std::size_t>(k)][1];
            c.diagonal_m = std::hypot(c.x_m, c.y_m);
            // The corner's word is that of the unit diagonal (±1, ±1) towards it, not of the plot's own
            // diagonal: the four diagonals are 90° apart, so the four words always differ.
            const auto& o = offsets[static_cast<std::size_t>(k)];
            c.label = eight_point(field_direction_bearing(o[0] < 0 ? -1 : 1, o[1] < 0 ? -1 : 1, x_bearing_deg));
            out.push_back(std::move(c));
        }
    }
    return out;
}

}  // namespace pw
