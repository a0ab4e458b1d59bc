// The field map's geometry (core/field/map_model.hpp) and the stake-out screen's text
// (firmware_app/stakeout_view.hpp).
//
// Sources for the expected values:
//  - Okabe & Ito (2008), "Color Universal Design": the palette's sRGB values (from memory): orange
//    230,159,0; sky blue 86,180,233; bluish green 0,158,115; yellow 240,228,66; blue 0,114,178;
//    vermillion 213,94,0; reddish purple 204,121,167.
//  - Map directions: compass bearings clockwise from north (common practice); the field frame of
//    docs/design.md drawn with x to the right and y up, so a bearing r degrees clockwise of the x axis points
//    r degrees clockwise of "right" on the page; north on a field with x_bearing 120 is 120° anticlockwise
//    of right, i.e. 30° left of straight up (cos 120° = -0.5, sin 120° = 0.866, plane trigonometry).
//  - 1-2-5 scale-bar lengths: common practice of map scale bars.
//  - The demo trial's sizes: layouts/demo.toml (plots 3 m across x by 6 m along y; trial 18 m x 28.5 m,
//    docs/design.md figure).
//  - PostScript point = 1/72 inch = 25.4/72 mm (PostScript Language Reference, from memory).
#include <catch2/catch.hpp>

#include <cstdio>
#include <string>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/field/map_model.hpp"
#include "core/spec/trial_spec.hpp"
#include "firmware_app/stakeout_view.hpp"

namespace {

pw::TrialSpec demo_spec() {
    std::string text;
    std::FILE* f = std::fopen(PW_SOURCE_DIR "/layouts/demo.toml", "rb");
    REQUIRE(f);
    char buf[4096];
    for (std::size_t n; (n = std::fread(buf, 1, sizeof buf, f)) > 0;) text.append(buf, n);
    std::fclose(f);
    return pw::parse_trial_spec(text, "demo.toml");
}

bool inside(const pw::PageRect& in, const pw::PageRect& out) {
    const double e = 1e-6;
    return in.x >= out.x - e && in.y >= out.y - e && in.x + in.w <= out.x + out.w + e && in.y + in.h <= out.y + out.h + e;
}

}  // namespace

TEST_CASE("The palette is Okabe and Ito's", "[map]") {
    const auto& p = pw::okabe_ito_palette();
    CHECK(std::string(p[1].hex) == "#E69F00");
    CHECK(std::string(p[2].hex) == "#56B4E9");
    CHECK(std::string(p[3].hex) == "#009E73");
    CHECK(std::string(p[4].hex) == "#F0E442");
    CHECK(std::string(p[5].hex) == "#0072B2");
    CHECK(std::string(p[6].hex) == "#D55E00");
    CHECK(std::string(p[7].hex) == "#CC79A7");
    CHECK(p[6].rgb.g * 255 == Approx(94));
}

TEST_CASE("Map directions follow the field frame on the page", "[map]") {
    const pw::PagePoint up = pw::page_direction(0, 90);   // north on an east-north field: straight up
    CHECK(up.x == Approx(0).margin(1e-12));
    CHECK(up.y == Approx(-1));
    const pw::PagePoint n120 = pw::page_direction(0, 120);
    CHECK(n120.x == Approx(-0.5));
    CHECK(n120.y == Approx(-0.8660254038));
    const pw::PagePoint right = pw::page_direction(120, 120);
    CHECK(right.x == Approx(1));
    CHECK(pw::nice_length(7.2) == 5);
    CHECK(pw::nice_length(10.3) == 10);
    CHECK(pw::nice_length(0.9) == Approx(0.5));
    CHECK(pw::nice_length(250) == 200);
}

TEST_CASE("The demo map draws every plot to scale inside the trial area", "[map]") {
    const pw::TrialSpec spec = demo_spec();
    const pw::Layout layout = pw::design_trial(spec, *spec.seed);
    const pw::MapModel m = pw::build_map_model(spec, layout, pw::MapOptions{});
    REQUIRE(m.plots.size() == 24);
    CHECK(m.trial.w / m.pt_per_m == Approx(18));
    CHECK(m.trial.h / m.pt_per_m == Approx(28.5));
    for (const auto& p : m.plots) {
        CHECK(p.rect.w / m.pt_per_m == Approx(3));
        CHECK(p.rect.h / m.pt_per_m == Approx(6));
        CHECK(inside(p.rect, m.trial));
        CHECK(p.key.empty());
        CHECK(p.fill.colour == -1);
    }
    // Plot 101 sits at the stake (bottom-left of the trial on the page).
    CHECK(m.plots.front().label == "101");
    CHECK(m.plots.front().rect.x == Approx(m.stake.x));
    CHECK(m.plots.front().rect.y + m.plots.front().rect.h == Approx(m.stake.y));
    REQUIRE(m.blocks.size() == 4);
    for (const auto& b : m.blocks) {
        REQUIRE(b.outline.size() == 1);
        CHECK(b.outline[0].w / m.pt_per_m == Approx(18));
        CHECK(b.outline[0].h / m.pt_per_m == Approx(6));
    }
    CHECK(m.north.dy == Approx(-1));       // gradient and north both point up: bearing 0 on an east-north field
    CHECK(m.gradient.dy == Approx(-1));
    // Scale bar: 5 m (a third of 18 m, rounded down to 1-2-5); its ratio in print.
    CHECK(m.scale.metres == 5);
    CHECK(m.scale.length_pt == Approx(5 * m.pt_per_m));
    CHECK(m.width_pt > m.legend_at.x);
}

TEST_CASE("Treatments get keys, palette colours and hatching; a blind trial refuses them", "[map]") {
    pw::TrialSpec spec = demo_spec();
    const pw::Layout layout = pw::design_trial(spec, *spec.seed);
    pw::MapOptions o;
    o.treatments = true;
    const pw::MapModel m = pw::build_map_model(spec, layout, o);
    for (std::size_t i = 0; i < m.plots.size(); ++i) {
        const int t = layout.plots[i].treatment;
        CHECK(m.plots[i].key == "T" + std::to_string(t + 1));
        CHECK(m.plots[i].fill.colour >= 1);
    }
    int treatment_entries = 0;
    for (const auto& e : m.legend)
        if (e.kind == pw::LegendEntry::Kind::Treatment) {
            CHECK(e.key == "T" + std::to_string(treatment_entries + 1));
            CHECK(e.text.rfind(spec.treatments[static_cast<std::size_t>(treatment_entries)].label, 0) == 0);
            ++treatment_entries;
        }
    CHECK(treatment_entries == 6);
    spec.blind = true;
    CHECK_THROWS_AS(pw::build_map_model(spec, layout, o), pw::InputError);
    CHECK_NOTHROW(pw::build_map_model(spec, layout, pw::MapOptions{}));
}

TEST_CASE("The stake-out screen fits 32x12 and shows the way to the next corner", "[stakeout][tui]") {
    pw::app::StakeoutState s;
    s.trial_code = "SORG26";
    pw::PlotCorner c1{101, 1, "SW", 0, 0, 0};
    pw::PlotCorner c2{101, 2, "SE", 3, 0, 3};
    s.corners = {c1, c2};
    // The field at (0, 0) on the equator, x east: corner 2 is 3 m east of the stake (geometry of the spec);
    // 3 m of longitude there is 3/a rad (WGS 84 a = 6 378 137 m).
    const double lon2 = 3.0 / 6378137.0 * 180.0 / 3.14159265358979323846;
    s.corner_positions = {pw::LatLon{0, 0}, pw::LatLon{0, lon2}};
    auto screen = pw::app::compose_stakeout_screen(s, 32, 12);
    REQUIRE(screen.size() == 12);
    CHECK(screen[1].text.find("Waiting") != std::string::npos);
    // A fix at the stake (GGA checksum computed by the NMEA 0183 rule in the file tests/data/nmea).
    s.feed("$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*00");  // bad checksum
    s.feed("$GNGGA,010203.00,0000.000000,N,00000.000000,E,4,14,0.6,1.0,M,0.0,M,,*" +
           [] {
               const std::string body = "GNGGA,010203.00,0000.000000,N,00000.000000,E,4,14,0.6,1.0,M,0.0,M,,";
               char sum[3];
               std::snprintf(sum, sizeof sum, "%02X", pw::nmea_checksum(body));
               return std::string(sum);
           }());
    s.next();
    screen = pw::app::compose_stakeout_screen(s, 32, 12);
    REQUIRE(screen.size() == 12);
    std::string all;
    for (const auto& l : screen) {
        CHECK(l.text.size() <= 32);
        all += l.text + "\n";
    }
    INFO(all);
    CHECK(screen.front().bar);
    CHECK(screen.front().text.find("bad 1") != std::string::npos);
    CHECK(all.find("RTK fixed") != std::string::npos);
    CHECK(all.find("plot 101 corner SE") != std::string::npos);
    CHECK(all.find("Go 3.00 m") != std::string::npos);
    CHECK(all.find("Dir 90 deg E") != std::string::npos);
    CHECK(screen.back().bar);
}
