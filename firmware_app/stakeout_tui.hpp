// The full-screen stake-out screen (ncurses) and its NMEA line source. See stakeout_view.hpp for what the
// screen shows.
#pragma once
#include <string>

#include "firmware_app/stakeout_view.hpp"

namespace pw::app {

// Runs the screen until 'q': reads NMEA lines from `nmea_path` (a file or a serial device, opened read-only
// and never configured: set its speed beforehand, e.g. with stty) without blocking the keys. `rate` lines
// per second (0: as fast as they come; use it to replay a file at a walking pace).
void run_stakeout_screen(StakeoutState& state, const std::string& nmea_path, double rate);

}  // namespace pw::app
