// NMEA 0183 GGA and RMC decoding (see nmea.hpp for the frame and the sources). Every refusal returns a
// sentence naming the field at fault; nothing here throws.
#include "core/field/nmea.hpp"

#include <fmt/format.h>

#include <array>
#include <cctype>
#include <charconv>
#include <vector>

namespace pw {
namespace {

// NMEA 0183: at most 82 characters including '$' and CR LF, so 80 without the line end (from memory).
constexpr std::size_t kMaxSentence = 80;

NmeaResult rejected(std::string reason) {
    NmeaResult r;
    r.outcome = NmeaOutcome::Rejected;
    r.reason = std::move(reason);
    return r;
}

std::vector<std::string_view> split_fields(std::string_view s) {
    std::vector<std::string_view> out;
    std::size_t start = 0;
    for (;;) {
        std::size_t comma = s.find(',', start);
        if (comma == std::string_view::npos) {
            out.push_back(s.substr(start));
            return out;
        }
        out.push_back(s.substr(start, comma - start));
        start = comma + 1;
    }
}

int hex_digit(char c) {
    if (c >= '0' && c <= '9') return c - '0';
    if (c >= 'A' && c <= 'F') return c - 'A' + 10;
    if (c >= 'a' && c <= 'f') return c - 'a' + 10;
    return -1;
}

bool all_digits(std::string_view s) {
    if (s.empty()) return false;
    for (char c : s)
        if (!std::isdigit(static_cast<unsigned char>(c))) return false;
    return true;
}

// A decimal number field; nullopt when empty; false in `ok` when not a number.
std::optional<double> number(std::string_view s, bool& ok) {
    if (s.empty()) return std::nullopt;
    double v = 0;
    auto [p, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    if (ec != std::errc() || p != s.data() + s.size()) {
        ok = false;
        return std::nullopt;
    }
    return v;
}

std::optional<int> integer(std::string_view s, bool& ok) {
    if (s.empty()) return std::nullopt;
    int v = 0;
    auto [p, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    if (ec != std::errc() || p != s.data() + s.size()) {
        ok = false;
        return std::nullopt;
    }
    return v;
}

// ddmm.mmmm (deg_digits = 2) or dddmm.mmmm (3) with its hemisphere letter to signed degrees:
// degrees = dd + mm.mmmm / 60 (NMEA 0183, from memory). Returns an error sentence in `err` when unsound.
std::optional<double> angle(std::string_view value, std::string_view hemi, int deg_digits, const char* name,
                            std::string& err) {
    if (value.empty() && hemi.empty()) return std::nullopt;
    const char positive = deg_digits == 2 ? 'N' : 'E';
    const char negative = deg_digits == 2 ? 'S' : 'W';
    if (hemi.size() != 1 || (hemi[0] != positive && hemi[0] != negative)) {
        err = fmt::format("{} hemisphere '{}' is not {} or {}", name, hemi, positive, negative);
        return std::nullopt;
    }
    const std::size_t dot = value.find('.');
    const std::string_view whole = value.substr(0, dot);
    const std::string_view frac = dot == std::string_view::npos ? std::string_view{} : value.substr(dot + 1);
    if (whole.size() != static_cast<std::size_t>(deg_digits + 2) || !all_digits(whole) ||
        (dot != std::string_view::npos && !frac.empty() && !all_digits(frac))) {
        err = fmt::format("{} '{}' is not {}mm.mmmm", name, value, deg_digits == 2 ? "dd" : "ddd");
        return std::nullopt;
    }
    bool ok = true;
    const int degrees = *integer(whole.substr(0, deg_digits), ok);
    const double minutes = *number(value.substr(deg_digits), ok);
    const int limit = deg_digits == 2 ? 90 : 180;
    if (!ok || minutes >= 60.0 || degrees + minutes / 60.0 > limit) {
        err = fmt::format("{} '{}' is out of range (minutes below 60, at most {} degrees)", name, value, limit);
        return std::nullopt;
    }
    const double deg = degrees + minutes / 60.0;
    return hemi[0] == negative ? -deg : deg;
}

std::string utc_text(std::string_view s, std::string& err) {
    if (s.empty()) return {};
    if (s.size() < 6 || !all_digits(s.substr(0, 6)) || (s.size() > 6 && (s[6] != '.' || !all_digits(s.substr(7))))) {
        err = fmt::format("UTC time '{}' is not hhmmss[.ss]", s);
        return {};
    }
    return fmt::format("{}:{}:{}", s.substr(0, 2), s.substr(2, 2), s.substr(4));
}

NmeaResult decode_gga(const std::vector<std::string_view>& f, std::string talker) {
    // $xxGGA,time,lat,N,lon,E,quality,sats,hdop,alt,M,sep,M,age,station: 15 fields with the address.
    if (f.size() < 15) return rejected(fmt::format("GGA has {} fields, expected 15 (truncated?)", f.size()));
    NmeaFix x;
    x.type = NmeaType::GGA;
    x.talker = std::move(talker);
    std::string err;
    x.utc = utc_text(f[1], err);
    if (err.empty()) x.lat_deg = angle(f[2], f[3], 2, "latitude", err);
    if (err.empty()) x.lon_deg = angle(f[4], f[5], 3, "longitude", err);
    if (!err.empty()) return rejected("GGA: " + err);
    bool ok = true;
    x.quality = integer(f[6], ok);
    if (!ok || (x.quality && (*x.quality < 0 || *x.quality > 9)))
        return rejected(fmt::format("GGA: fix quality '{}' is not a single digit", f[6]));
    x.satellites = integer(f[7], ok);
    if (!ok) return rejected(fmt::format("GGA: satellites '{}' is not a whole number", f[7]));
    x.hdop = number(f[8], ok);
    if (!ok) return rejected(fmt::format("GGA: HDOP '{}' is not a number", f[8]));
    x.altitude_m = number(f[9], ok);
    if (!ok) return rejected(fmt::format("GGA: altitude '{}' is not a number", f[9]));
    x.geoid_separation_m = number(f[11], ok);
    if (!ok) return rejected(fmt::format("GGA: geoid separation '{}' is not a number", f[11]));
    x.valid = x.quality.value_or(0) > 0 && x.lat_deg && x.lon_deg;
    NmeaResult r;
    r.outcome = NmeaOutcome::Accepted;
    r.fix = std::move(x);
    return r;
}

NmeaResult decode_rmc(const std::vector<std::string_view>& f, std::string talker) {
    // $xxRMC,time,status,lat,N,lon,E,speed,course,date,magvar,E/W[,mode[,navstatus]]: 12 fields or more.
    if (f.size() < 12) return rejected(fmt::format("RMC has {} fields, expected at least 12 (truncated?)", f.size()));
    NmeaFix x;
    x.type = NmeaType::RMC;
    x.talker = std::move(talker);
    std::string err;
    x.utc = utc_text(f[1], err);
    if (err.empty() && f[2] != "A" && f[2] != "V") err = fmt::format("status '{}' is not A or V", f[2]);
    if (err.empty()) x.lat_deg = angle(f[3], f[4], 2, "latitude", err);
    if (err.empty()) x.lon_deg = angle(f[5], f[6], 3, "longitude", err);
    if (!err.empty()) return rejected("RMC: " + err);
    bool ok = true;
    x.speed_knots = number(f[7], ok);
    if (!ok) return rejected(fmt::format("RMC: speed '{}' is not a number", f[7]));
    x.course_deg = number(f[8], ok);
    if (!ok) return rejected(fmt::format("RMC: course '{}' is not a number", f[8]));
    if (!f[9].empty()) {
        if (f[9].size() != 6 || !all_digits(f[9])) return rejected(fmt::format("RMC: date '{}' is not ddmmyy", f[9]));
        const int dd = (f[9][0] - '0') * 10 + (f[9][1] - '0');
        const int mm = (f[9][2] - '0') * 10 + (f[9][3] - '0');
        const int yy = (f[9][4] - '0') * 10 + (f[9][5] - '0');
        if (dd < 1 || dd > 31 || mm < 1 || mm > 12) return rejected(fmt::format("RMC: date '{}' is not ddmmyy", f[9]));
        // Two-digit years pivot at 80: 80..99 are 1980..1999 (GPS began in 1980), 00..79 are 2000..2079.
        x.date_iso = fmt::format("{:04d}-{:02d}-{:02d}", yy >= 80 ? 1900 + yy : 2000 + yy, mm, dd);
    }
    x.magnetic_variation_deg = number(f[10], ok);
    if (!ok) return rejected(fmt::format("RMC: magnetic variation '{}' is not a number", f[10]));
    if (x.magnetic_variation_deg) {
        if (f[11] == "W") x.magnetic_variation_deg = -*x.magnetic_variation_deg;
        else if (f[11] != "E") return rejected(fmt::format("RMC: variation direction '{}' is not E or W", f[11]));
    }
    if (f.size() > 12) x.mode = std::string(f[12]);
    x.valid = f[2] == "A" && x.mode != "N" && x.lat_deg && x.lon_deg;
    NmeaResult r;
    r.outcome = NmeaOutcome::Accepted;
    r.fix = std::move(x);
    return r;
}

}  // namespace

std::uint8_t nmea_checksum(std::string_view body) {
    std::uint8_t sum = 0;
    for (char c : body) sum ^= static_cast<std::uint8_t>(c);
    return sum;
}

NmeaResult parse_nmea(std::string_view line) {
    while (!line.empty() && (line.back() == '\n' || line.back() == '\r')) line.remove_suffix(1);
    if (line.empty()) return rejected("empty line");
    if (line.front() != '$') return rejected("does not start with '$'");
    if (line.size() > kMaxSentence)
        return rejected(fmt::format("{} characters, more than the 82 NMEA 0183 allows with CR LF", line.size() + 2));
    for (char c : line)
        if (static_cast<unsigned char>(c) < 0x20 || static_cast<unsigned char>(c) > 0x7e)
            return rejected("contains a character outside printable ASCII");
    const std::size_t star = line.find('*');
    if (star == std::string_view::npos) return rejected("no '*' and checksum (truncated?)");
    const std::string_view sum_text = line.substr(star + 1);
    if (sum_text.size() != 2 || hex_digit(sum_text[0]) < 0 || hex_digit(sum_text[1]) < 0)
        return rejected(fmt::format("checksum '{}' is not two hex digits (truncated?)", sum_text));
    const std::string_view body = line.substr(1, star - 1);
    const int given = hex_digit(sum_text[0]) * 16 + hex_digit(sum_text[1]);
    const std::uint8_t computed = nmea_checksum(body);
    if (given != computed)
        return rejected(fmt::format("checksum is {:02X}, the sentence says {}", computed, sum_text));
    const std::vector<std::string_view> fields = split_fields(body);
    const std::string_view address = fields[0];
    if (!address.empty() && address[0] == 'P') {
        NmeaResult r;
        r.outcome = NmeaOutcome::Ignored;
        r.reason = "proprietary sentence";
        return r;
    }
    if (address.size() != 5) return rejected(fmt::format("address '{}' is not a talker and a type", address));
    for (char c : address)
        if (!std::isupper(static_cast<unsigned char>(c)) && !std::isdigit(static_cast<unsigned char>(c)))
            return rejected(fmt::format("address '{}' is not upper-case letters", address));
    std::string talker(address.substr(0, 2));
    const std::string_view type = address.substr(2);
    if (type == "GGA") return decode_gga(fields, std::move(talker));
    if (type == "RMC") return decode_rmc(fields, std::move(talker));
    NmeaResult r;
    r.outcome = NmeaOutcome::Ignored;
    r.reason = std::string(type) + " sentence";
    return r;
}

std::string fix_quality_name(int quality) {
    static const std::array<const char*, 9> names = {"no fix", "GPS", "DGPS", "PPS", "RTK fixed",
                                                     "RTK float", "estimated", "manual", "simulation"};
    if (quality >= 0 && quality < static_cast<int>(names.size())) return names[static_cast<std::size_t>(quality)];
    return fmt::format("quality {}", quality);
}

void NmeaCounts::add(const NmeaResult& r) {
    switch (r.outcome) {
        case NmeaOutcome::Accepted: ++accepted; break;
        case NmeaOutcome::Ignored: ++ignored; break;
        case NmeaOutcome::Rejected: ++rejected; break;
    }
}

}  // namespace pw
