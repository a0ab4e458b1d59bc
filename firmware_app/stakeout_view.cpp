// Composition of the stake-out screen (see stakeout_view.hpp). Text only; widths count bytes, and every
// string here is ASCII except the degree sign, which is written "deg" to keep the count exact.
#include "firmware_app/stakeout_view.hpp"

#include <fmt/format.h>

namespace pw::app {
namespace {

std::string cut(std::string s, int width) {
    if (width < 0) width = 0;
    if (s.size() > static_cast<std::size_t>(width)) s.resize(static_cast<std::size_t>(width));
    return s;
}

std::string fix_kind(const NmeaFix& f) {
    if (f.type == NmeaType::GGA) return fix_quality_name(f.quality.value_or(0));
    if (!f.valid) return "no fix";
    if (f.mode == "R") return "RTK fixed";
    if (f.mode == "F") return "RTK float";
    if (f.mode == "D") return "DGPS";
    return "GNSS";
}

}  // namespace

void StakeoutState::next() {
    if (index + 1 < corners.size()) ++index;
}

void StakeoutState::previous() {
    if (index > 0) --index;
}

NmeaResult StakeoutState::feed(const std::string& line) {
    NmeaResult r = parse_nmea(line);
    counts.add(r);
    if (r.outcome == NmeaOutcome::Rejected) last_refusal = r.reason;
    if (r.outcome == NmeaOutcome::Accepted) fix = r.fix;  // also a sentence saying "no fix", so it shows
    return r;
}

std::optional<GeodesicLeg> leg_to_target(const StakeoutState& s) {
    if (!s.fix || !s.fix->valid || !s.fix->lat_deg || !s.fix->lon_deg || s.index >= s.corner_positions.size())
        return std::nullopt;
    return geodesic_inverse(LatLon{*s.fix->lat_deg, *s.fix->lon_deg}, s.corner_positions[s.index]);
}

std::vector<StakeoutLine> compose_stakeout_screen(const StakeoutState& s, int width, int height) {
    std::vector<StakeoutLine> body;
    auto add = [&](std::string text, bool strong = false) { body.push_back({false, strong, cut(std::move(text), width)}); };

    if (!s.fix) {
        add(s.source_ended ? "No fix: the NMEA input ended" : "Waiting for a fix ...");
        add("");
    } else {
        const NmeaFix& f = *s.fix;
        add(fmt::format("Fix {}{}", fix_kind(f), f.satellites ? fmt::format(" {} sats", *f.satellites) : ""));
        if (f.lat_deg && f.lon_deg) add(fmt::format(" {:.7f} {:.7f}", *f.lat_deg, *f.lon_deg));
        else add(" no position");
    }
    if (s.corners.empty()) {
        add("No plot corners");
    } else {
        const PlotCorner& c = s.corners[s.index];
        add(fmt::format("To plot {} corner {}", c.plot, c.label));
        add(fmt::format(" c{}, {} of {}", c.corner, s.index + 1, s.corners.size()));
        add(fmt::format("Tape x {:.2f} y {:.2f} m", c.x_m, c.y_m));
        if (const auto leg = leg_to_target(s)) {
            add(fmt::format("Go {:.2f} m", leg->distance_m), true);
            add(fmt::format("Dir {:.0f} deg {}", leg->azimuth_deg, compass_word(leg->azimuth_deg)), true);
        } else {
            add("Go --", true);
            add("Dir --", true);
        }
    }
    add(s.last_refusal.empty() ? "" : "Bad: " + s.last_refusal);

    std::vector<StakeoutLine> screen;
    screen.push_back({true, false, cut(fmt::format("{} stake-out  bad {}", s.trial_code, s.counts.rejected), width)});
    const int room = std::max(0, height - 2);
    for (int i = 0; i < room; ++i)
        screen.push_back(i < static_cast<int>(body.size()) ? body[static_cast<std::size_t>(i)] : StakeoutLine{});
    if (height >= 2) screen.push_back({true, false, cut("n next p prev q quit", width)});
    if (static_cast<int>(screen.size()) > height) screen.resize(static_cast<std::size_t>(std::max(height, 0)));
    return screen;
}

std::string describe_fix_line(const StakeoutState& s) {
    if (!s.fix || !s.fix->lat_deg || !s.fix->lon_deg) return "";
    const NmeaFix& f = *s.fix;
    std::string line = fmt::format("{} {} {:.8f} {:.8f} {}", f.talker + (f.type == NmeaType::GGA ? "GGA" : "RMC"),
                                   f.utc.empty() ? "-" : f.utc, *f.lat_deg, *f.lon_deg, fix_kind(f));
    if (s.index < s.corners.size()) {
        const PlotCorner& c = s.corners[s.index];
        line += fmt::format(" -> plot {} c{} {}", c.plot, c.corner, c.label);
        if (const auto leg = leg_to_target(s))
            line += fmt::format(": {:.3f} m at {:.2f} deg {}", leg->distance_m, leg->azimuth_deg,
                                compass_word(leg->azimuth_deg));
    }
    return line;
}

}  // namespace pw::app
