// NMEA 0183 position sentences, GGA and RMC, as a GNSS receiver sends them line by line. Pure: a line in,
// a decoded fix or a refusal with its reason out; no device, no clock.
//
// Frame (NMEA 0183, from memory, as in docs/agronomist.md): '$', a two-letter talker (GP GPS, GN several
// systems, GL GLONASS, GA Galileo, GB/BD BeiDou, GQ QZSS), the three-letter type, comma-separated fields,
// '*', the checksum as two hex digits, CR LF; at most 82 characters with '$' and CR LF. The checksum is the
// XOR of every character strictly between '$' and '*'. Positions are ddmm.mmmm (latitude) and dddmm.mmmm
// (longitude) with a hemisphere letter; degrees = dd + mm.mmmm / 60, negative south and west.
//
// Invariants: parse_nmea never throws and never reads past the line; a line is Accepted (GGA or RMC whose
// checksum and fields are sound), Ignored (a sound sentence of another type, e.g. GSV), or Rejected with a
// sentence saying why. Empty fields are absent values (std::nullopt), never zero.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace pw {

enum class NmeaType { GGA, RMC };

struct NmeaFix {
    NmeaType type = NmeaType::GGA;
    std::string talker;                 // "GP", "GN", ...
    std::string utc;                    // hh:mm:ss[.ss] as sent, with colons added; "" when empty
    std::optional<double> lat_deg;      // WGS 84 (as the receiver reports it), south negative
    std::optional<double> lon_deg;      // west negative
    bool valid = false;                 // GGA: fix quality > 0; RMC: status 'A' (and mode not 'N')
    // GGA
    std::optional<int> quality;         // 0 invalid, 1 GPS, 2 DGPS, 3 PPS, 4 RTK fixed, 5 RTK float, 6 estimated,
                                        // 7 manual, 8 simulation
    std::optional<int> satellites;
    std::optional<double> hdop;
    std::optional<double> altitude_m;   // above mean sea level
    std::optional<double> geoid_separation_m;
    // RMC
    std::optional<double> speed_knots;
    std::optional<double> course_deg;   // over ground, degrees true
    std::string date_iso;               // YYYY-MM-DD; two-digit years: 80..99 -> 1980..1999, 00..79 -> 2000..2079
    std::optional<double> magnetic_variation_deg;  // west negative
    std::string mode;                   // NMEA 2.3+ mode indicator (A, D, E, N, S, R, F, ...); "" when absent
};

enum class NmeaOutcome { Accepted, Ignored, Rejected };

struct NmeaResult {
    NmeaOutcome outcome = NmeaOutcome::Rejected;
    std::optional<NmeaFix> fix;         // set when Accepted
    std::string reason;                 // Rejected: why ("checksum is 6A, the sentence says 1D"); Ignored: type
};

// Decodes one line (a trailing CR and/or LF is allowed and dropped).
NmeaResult parse_nmea(std::string_view line);

// XOR of the characters of `body` (the text between '$' and '*').
std::uint8_t nmea_checksum(std::string_view body);

// Plain words for a GGA fix quality ("RTK fixed"); "quality N" for values outside 0..8.
std::string fix_quality_name(int quality);

// Counts of a stream of lines, for the stake-out screen's "bad sentences".
struct NmeaCounts {
    long accepted = 0;
    long ignored = 0;
    long rejected = 0;
    void add(const NmeaResult& r);
};

}  // namespace pw
