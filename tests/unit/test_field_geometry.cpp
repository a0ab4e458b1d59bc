// Stake-out geometry and geodesy (core/field/stakeout.hpp, core/field/geodesy.hpp).
//
// Sources for the expected values:
//  - Compass bearings clockwise from north and the 16-point compass rose: common practice (mariner's compass).
//  - The field frame (x along the base line at x_bearing_deg, y 90° anticlockwise): docs/design.md, whose
//    worked example says x_bearing 120 puts x towards ESE (120) and y towards NNE (30); the demo's plot
//    positions are read from the figure in docs/design.md (plot 101 spans x 0-3, y 0-6; plot 406 spans
//    x 0-3, y 22.5-28.5; the trial is 18 m x 28.5 m).
//  - WGS 84 ellipsoid: a = 6 378 137 m, f = 1/298.257223563 (NIMA TR8350.2, from memory). Along the equator
//    a geodesic is an arc of radius a, so 100 m east of (0, 0) is 100/a rad of longitude; along a meridian
//    at the equator the radius of curvature is M = a(1 - e²) = 6 335 439.327 m (e² = f(2 - f)).
//  - Karney 2013 ("Algorithms for geodesics", J. Geodesy 87:43-55), worked direct problem (from memory):
//    from latitude 40°, azimuth 30°, 10 000 km gives latitude 41.79331020506°, longitude 137.84490004377°;
//    re-checked with GeodSolve (geographiclib-tools 2.1): 41.793310205056265 137.844900043771503.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <numbers>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/field/geodesy.hpp"
#include "core/field/stakeout.hpp"
#include "core/spec/trial_spec.hpp"

namespace {

constexpr double kA = 6378137.0;
constexpr double kF = 1 / 298.257223563;

pw::Layout one_plot(double x, double y, double wx, double wy) {
    pw::Layout l;
    pw::PlotPlacement p;
    p.id = 101;
    p.x_m = x;
    p.y_m = y;
    p.width_x_m = wx;
    p.width_y_m = wy;
    l.plots.push_back(p);
    return l;
}

}  // namespace

TEST_CASE("The field frame turns into compass bearings as docs/design.md defines it", "[stakeout]") {
    // Default bearing 90: x east, y north.
    CHECK(pw::field_direction_bearing(1, 0, 90) == Approx(90));
    CHECK(pw::field_direction_bearing(0, 1, 90) == Approx(0).margin(1e-9));
    // x_bearing 120: x towards 120 (ESE), y towards 30 (NNE).
    CHECK(pw::field_direction_bearing(1, 0, 120) == Approx(120));
    CHECK(pw::field_direction_bearing(0, 1, 120) == Approx(30));
    CHECK(pw::compass_word(120) == "ESE");
    CHECK(pw::compass_word(30) == "NNE");
    // x_bearing 0: x north, y west.
    const pw::EastNorth en = pw::field_to_east_north(0, 10, 0);
    CHECK(en.east_m == Approx(-10));
    CHECK(en.north_m == Approx(0).margin(1e-12));
}

TEST_CASE("The 16-point compass words follow the rose", "[stakeout]") {
    // Common practice: sectors of 22.5° centred on each point.
    CHECK(pw::compass_word(0) == "N");
    CHECK(pw::compass_word(11.2) == "N");
    CHECK(pw::compass_word(11.3) == "NNE");
    CHECK(pw::compass_word(45) == "NE");
    CHECK(pw::compass_word(180) == "S");
    CHECK(pw::compass_word(247.5) == "WSW");
    CHECK(pw::compass_word(348.7) == "NNW");
    CHECK(pw::compass_word(359.9) == "N");
    CHECK(pw::compass_word(-90) == "W");
    CHECK(pw::compass_bearing(-1, -1) == Approx(225));
}

TEST_CASE("Plot corners run anticlockwise from the corner nearest the stake", "[stakeout]") {
    // The demo's plot 101 (docs/design.md figure): x 0..3, y 0..6, on an east-north field.
    const auto corners = pw::plot_corners(one_plot(1.5, 3.0, 3.0, 6.0), 90);
    REQUIRE(corners.size() == 4);
    CHECK(corners[0].x_m == 0);
    CHECK(corners[0].y_m == 0);
    CHECK(corners[0].label == "SW");
    CHECK(corners[1].x_m == 3);
    CHECK(corners[1].label == "SE");
    CHECK(corners[2].x_m == 3);
    CHECK(corners[2].y_m == 6);
    CHECK(corners[2].label == "NE");
    CHECK(corners[2].diagonal_m == Approx(std::sqrt(45.0)));  // Pythagoras: 3² + 6²
    CHECK(corners[3].label == "NW");
    // Shoelace sum of the ring: positive means anticlockwise (the GeoJSON exterior's orientation).
    double twice_area = 0;
    for (std::size_t i = 0; i < 4; ++i) {
        const auto& a = corners[i];
        const auto& b = corners[(i + 1) % 4];
        twice_area += a.x_m * b.y_m - b.x_m * a.y_m;
    }
    CHECK(twice_area / 2 == Approx(18.0));
}

TEST_CASE("The demo's corners match the figure in docs/design.md", "[stakeout]") {
    std::string text;
    {
        std::FILE* f = std::fopen(PW_SOURCE_DIR "/layouts/demo.toml", "rb");
        REQUIRE(f);
        char buf[4096];
        for (std::size_t n; (n = std::fread(buf, 1, sizeof buf, f)) > 0;) text.append(buf, n);
        std::fclose(f);
    }
    const pw::TrialSpec spec = pw::parse_trial_spec(text, "demo.toml");
    const pw::Layout layout = pw::design_trial(spec, *spec.seed);
    const auto corners = pw::plot_corners(layout, spec.field.x_bearing_deg);
    REQUIRE(corners.size() == 4 * 24);
    for (const auto& c : corners) {
        CHECK(c.x_m >= -1e-9);
        CHECK(c.x_m <= 18 + 1e-9);
        CHECK(c.y_m >= -1e-9);
        CHECK(c.y_m <= 28.5 + 1e-9);
        if (c.plot == 406 && c.corner == 3) {
            CHECK(c.x_m == Approx(3));
            CHECK(c.y_m == Approx(28.5));
        }
    }
    CHECK(corners.front().plot == 101);
}

TEST_CASE("Positions on the WGS 84 ellipsoid agree with its radii", "[geodesy]") {
    const pw::FieldGeoreference eq(pw::LatLon{0, 0}, 90);
    const pw::LatLon east = eq.to_wgs84(100, 0);
    CHECK(east.lat_deg == Approx(0).margin(1e-12));
    CHECK(east.lon_deg == Approx(100 / kA * 180 / std::numbers::pi).epsilon(1e-9));
    const pw::LatLon north = eq.to_wgs84(0, 100);
    const double e2 = kF * (2 - kF);
    CHECK(north.lat_deg == Approx(100 / (kA * (1 - e2)) * 180 / std::numbers::pi).epsilon(1e-6));
    CHECK(north.lon_deg == Approx(0).margin(1e-12));
    CHECK_THROWS_AS(pw::FieldGeoreference(pw::LatLon{91, 0}, 90), pw::InputError);
}

TEST_CASE("The geodesic inverse reproduces Karney's worked example", "[geodesy]") {
    // Karney 2013, from memory, re-checked with GeodSolve: 10 000 km at azimuth 30° from (40°, 0°).
    const pw::GeodesicLeg leg = pw::geodesic_inverse(pw::LatLon{40, 0}, pw::LatLon{41.79331020506, 137.84490004377});
    CHECK(leg.distance_m == Approx(10000000.0).margin(1e-3));
    CHECK(leg.azimuth_deg == Approx(30.0).margin(1e-8));
}
