// NMEA 0183 GGA/RMC decoding (core/field/nmea.hpp).
//
// Sources for the expected values:
//  - tests/data/nmea/sentences.nmea and its README: the textbook GGA/RMC examples and the sentences
//    constructed in the project's standards reference notes, with checksums recomputed there; the decoded
//    values below (48.1173, 11.5166667, -33.7520567, 151.2094633, 41.4149383, -81.8613967, 22.4 kn, course
//    84.4, date 1994-03-23, variation 3.1 W) are those notes' [computed] values.
//  - The frame rules (checksum = XOR between '$' and '*', at most 82 characters with CR LF, ddmm.mmmm):
//    NMEA 0183, from memory.
#include <catch2/catch.hpp>

#include <cstdio>
#include <fstream>
#include <string>
#include <vector>

#include "core/field/nmea.hpp"

namespace {

std::vector<std::string> data_lines() {
    std::ifstream in(std::string(PW_TEST_DATA_DIR) + "/nmea/sentences.nmea");
    REQUIRE(in);
    std::vector<std::string> out;
    std::string line;
    while (std::getline(in, line))
        if (!line.empty() && line[0] != '#') out.push_back(line);
    return out;
}

pw::NmeaFix accepted(const std::string& line) {
    const pw::NmeaResult r = pw::parse_nmea(line);
    INFO(line << " -> " << r.reason);
    REQUIRE(r.outcome == pw::NmeaOutcome::Accepted);
    REQUIRE(r.fix);
    return *r.fix;
}

}  // namespace

TEST_CASE("The textbook GGA sentence decodes to the reference values", "[nmea]") {
    // Standards reference notes, section 3: 12:35:19 UTC, 48.1173 N, 11.5166667 E, GPS fix, 8 satellites.
    const pw::NmeaFix f = accepted("$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*47\r\n");
    CHECK(f.type == pw::NmeaType::GGA);
    CHECK(f.talker == "GP");
    CHECK(f.utc == "12:35:19");
    CHECK(*f.lat_deg == Approx(48.1173).margin(1e-9));
    CHECK(*f.lon_deg == Approx(11.516666666666667).margin(1e-9));
    CHECK(*f.quality == 1);
    CHECK(*f.satellites == 8);
    CHECK(*f.hdop == Approx(0.9));
    CHECK(*f.altitude_m == Approx(545.4));
    CHECK(*f.geoid_separation_m == Approx(46.9));
    CHECK(f.valid);
}

TEST_CASE("The textbook RMC sentence decodes speed, course, date and variation", "[nmea]") {
    const pw::NmeaFix f = accepted("$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A");
    CHECK(f.type == pw::NmeaType::RMC);
    CHECK(*f.lat_deg == Approx(48.1173).margin(1e-9));
    CHECK(*f.lon_deg == Approx(11.516666666666667).margin(1e-9));
    CHECK(*f.speed_knots == Approx(22.4));
    CHECK(*f.course_deg == Approx(84.4));
    CHECK(f.date_iso == "1994-03-23");  // two-digit year 94 with the pivot at 80 (documented in nmea.hpp)
    CHECK(*f.magnetic_variation_deg == Approx(-3.1));
    CHECK(f.valid);
}

TEST_CASE("Constructed sentences give hemisphere signs, RTK quality and absent fields", "[nmea]") {
    const pw::NmeaFix south = accepted("$GNGGA,092750.00,3345.12340,S,15112.56780,E,4,12,0.7,35.2,M,21.8,M,1.0,0000*78");
    CHECK(south.talker == "GN");
    CHECK(*south.lat_deg == Approx(-33.75205666666667).margin(1e-9));
    CHECK(*south.lon_deg == Approx(151.20946333333333).margin(1e-9));
    CHECK(*south.quality == 4);
    CHECK(pw::fix_quality_name(*south.quality) == "RTK fixed");

    const pw::NmeaFix west = accepted("$GPGGA,170834,4124.8963,N,08151.6838,W,1,05,1.5,280.2,M,-34.0,M,,*75");
    CHECK(*west.lat_deg == Approx(41.41493833333333).margin(1e-9));
    CHECK(*west.lon_deg == Approx(-81.86139666666666).margin(1e-9));
    CHECK(*west.geoid_separation_m == Approx(-34.0));

    const pw::NmeaFix rmc = accepted("$GNRMC,092750.00,A,3345.12340,S,15112.56780,E,0.02,,150624,,,R,V*2A");
    CHECK_FALSE(rmc.course_deg.has_value());  // empty field: absent, not zero
    CHECK_FALSE(rmc.magnetic_variation_deg.has_value());
    CHECK(rmc.mode == "R");
    CHECK(rmc.date_iso == "2024-06-15");
}

TEST_CASE("Sentences carrying wrong checksums in circulation are refused, their corrected forms read", "[nmea]") {
    // Standards reference notes: the copy ending *1D has checksum 7C; the GLL ending *3C has checksum 25.
    const pw::NmeaResult bad = pw::parse_nmea("$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,,,A*1D");
    CHECK(bad.outcome == pw::NmeaOutcome::Rejected);
    CHECK(bad.reason == "checksum is 7C, the sentence says 1D");
    CHECK(pw::parse_nmea("$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,,,A*7C").outcome ==
          pw::NmeaOutcome::Accepted);
    const pw::NmeaResult gll = pw::parse_nmea("$GPGLL,4807.038,N,01131.000,E,123519,A*3C");
    CHECK(gll.outcome == pw::NmeaOutcome::Rejected);
    CHECK(gll.reason.find("25") != std::string::npos);
    // A sound sentence of another type is ignored, not refused.
    CHECK(pw::parse_nmea("$GPGLL,4807.038,N,01131.000,E,123519,A*25").outcome == pw::NmeaOutcome::Ignored);
    CHECK(pw::nmea_checksum("GPGLL,4807.038,N,01131.000,E,123519,A") == 0x25);
}

TEST_CASE("Truncated, over-long and malformed lines are refused with a reason, never a crash", "[nmea]") {
    const std::string good = "$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*47";
    // Every prefix of a good sentence (a line cut anywhere) is refused, each with a reason.
    for (std::size_t n = 0; n < good.size(); ++n) {
        const pw::NmeaResult r = pw::parse_nmea(good.substr(0, n));
        INFO(good.substr(0, n));
        CHECK(r.outcome == pw::NmeaOutcome::Rejected);
        CHECK_FALSE(r.reason.empty());
    }
    // NMEA 0183: at most 82 characters with '$' and CR LF.
    const pw::NmeaResult longer = pw::parse_nmea(
        "$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,,,,,,,,,,,,,,,,,,,,,,,,*47");
    CHECK(longer.outcome == pw::NmeaOutcome::Rejected);
    CHECK(longer.reason.find("82") != std::string::npos);
    CHECK(pw::parse_nmea("GPGGA,123519*47").reason == "does not start with '$'");
    CHECK(pw::parse_nmea("").reason == "empty line");
    // Minutes of 60 or more are not a position (ddmm.mmmm); checksum made sound so the field is judged.
    std::string body = "GPGGA,123519,4867.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,";
    char sum[3];
    std::snprintf(sum, sizeof sum, "%02X", pw::nmea_checksum(body));
    const pw::NmeaResult minutes = pw::parse_nmea("$" + body + "*" + sum);
    CHECK(minutes.outcome == pw::NmeaOutcome::Rejected);
    CHECK(minutes.reason.find("latitude") != std::string::npos);
}

TEST_CASE("The example file counts its good, ignored and bad sentences", "[nmea]") {
    // tests/data/nmea/sentences.nmea (README beside it): 9 GGA/RMC with sound checksums, 2 with wrong
    // checksums, 1 truncated, 1 too long, 1 GLL and 1 GSV ignored.
    pw::NmeaCounts counts;
    for (const std::string& line : data_lines()) counts.add(pw::parse_nmea(line));
    CHECK(counts.accepted == 9);
    CHECK(counts.ignored == 2);
    CHECK(counts.rejected == 4);
}
