// The handheld stake-out screen's content: the current GNSS fix, the next plot corner in stake order, the
// distance and direction to it, and the count of bad sentences. Pure (no terminal), so a test composes the
// screen at any size and reads it as text; stakeout_tui.cpp only paints it and maps keys.
//
// Layout (top to bottom, 12 lines at the handheld's 32x12): a status bar (trial, bad-sentence count), the
// fix (kind, satellites, position), the target corner and its tape distances, the distance and bearing to
// go, the latest refused sentence, and a key bar. Bars are drawn reversed by the terminal layer; nothing
// depends on colour.
#pragma once
#include <optional>
#include <string>
#include <vector>

#include "core/field/geodesy.hpp"
#include "core/field/nmea.hpp"
#include "core/field/stakeout.hpp"

namespace pw::app {

struct StakeoutState {
    std::string trial_code;
    std::vector<PlotCorner> corners;      // stake order
    std::vector<LatLon> corner_positions; // WGS 84, same order
    std::size_t index = 0;                // the target corner
    std::optional<NmeaFix> fix;           // the latest accepted sentence with a position
    NmeaCounts counts;
    std::string last_refusal;             // reason of the latest rejected sentence
    bool source_ended = false;            // the NMEA file has no more lines

    void next();                          // to the next corner (stops at the last)
    void previous();                      // to the previous corner (stops at the first)
    // Feeds one NMEA line; returns the parse result (the state keeps fixes, counts and refusals).
    NmeaResult feed(const std::string& line);
};

// Distance and forward azimuth from the current fix to the target corner (geodesic on WGS 84), when there
// is a valid fix.
std::optional<GeodesicLeg> leg_to_target(const StakeoutState& s);

struct StakeoutLine {
    bool bar = false;     // status or key bar (drawn reversed)
    bool strong = false;  // distance and direction (drawn bold)
    std::string text;     // cut to the width
};

std::vector<StakeoutLine> compose_stakeout_screen(const StakeoutState& s, int width, int height);

// One line for a good fix when there is no terminal: time, position, fix kind, the target and the way to it.
std::string describe_fix_line(const StakeoutState& s);

}  // namespace pw::app
