// Fuzz target: the NMEA 0183 reader behind the handheld's stake-out screen. A GNSS receiver on a serial line
// sends noise, cut sentences and other talkers' chatter; any byte string must be accepted, ignored or
// rejected with a reason, never crash or trip a sanitizer. An accepted fix must hold a position on the
// Earth (latitude within ±90°, longitude within ±180°, NMEA 0183's ddmm.mmmm ranges) and a rejection must
// say why.
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

#include "core/field/nmea.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view line(reinterpret_cast<const char*>(data), size);
    const pw::NmeaResult r = pw::parse_nmea(line);
    if (r.outcome == pw::NmeaOutcome::Rejected && r.reason.empty()) std::abort();
    if (r.outcome == pw::NmeaOutcome::Accepted) {
        if (!r.fix) std::abort();
        if (r.fix->lat_deg && !(*r.fix->lat_deg >= -90 && *r.fix->lat_deg <= 90)) std::abort();
        if (r.fix->lon_deg && !(*r.fix->lon_deg >= -180 && *r.fix->lon_deg <= 180)) std::abort();
    }
    return 0;
}
