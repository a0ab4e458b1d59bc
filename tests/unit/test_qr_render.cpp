// QR plot tags (core/tags/render.hpp): version chosen for a payload, symbol structure, PNG bytes and SVG text.
//
// Sources for the expected values:
//  - tests/data/qr_capacity_v1_4.csv: ISO/IEC 18004 capacities, versions 1-4 (attribution in the file; verified
//    with qrencode 4.1.1 and by re-derivation from the data codewords).
//  - ISO/IEC 18004 (from memory): version v is 17 + 4v modules across; finder patterns of 7 x 7 modules (dark
//    ring, light ring, dark 3 x 3 centre) in three corners with a light separator; timing patterns of alternating
//    modules on row 6 and column 6; the dark module at (8, 4v + 9); a 4-module quiet zone; version 40 at level L
//    holds 4296 alphanumeric characters.
//  - PNG (ISO/IEC 15948, W3C PNG specification, from memory): the 8-byte signature 137 80 78 71 13 10 26 10,
//    then the IHDR chunk (length 13) with big-endian width and height, bit depth, colour type 0 = greyscale.
//    Pixels are read back with libpng's own reader (png_image_begin_read_from_memory).
//  - SVG 1.1 (W3C): the root element <svg> in the namespace http://www.w3.org/2000/svg; XML 1.0 escapes
//    & < > " ' as entity references. Well-formedness and decoding are checked by outside tools in
//    tests/cmake/tags.cmake.
#include <catch2/catch.hpp>

#include <png.h>

#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "core/tags/payload.hpp"
#include "core/tags/render.hpp"

namespace {

struct CapacityRow {
    int version = 0;
    std::string level;
    int numeric = 0;
    int alphanumeric = 0;
    int byte = 0;
};

std::vector<CapacityRow> read_capacity_table() {
    std::ifstream in(std::string(PW_TEST_DATA_DIR) + "/qr_capacity_v1_4.csv");
    REQUIRE(in);
    std::vector<CapacityRow> rows;
    std::string line;
    bool header_seen = false;
    while (std::getline(in, line)) {
        if (line.empty() || line[0] == '#') continue;
        if (!header_seen) {
            header_seen = true;
            continue;
        }
        std::istringstream fields(line);
        CapacityRow r;
        std::string v, n, a, b;
        std::getline(fields, v, ',');
        std::getline(fields, r.level, ',');
        std::getline(fields, n, ',');
        std::getline(fields, a, ',');
        std::getline(fields, b, ',');
        r.version = std::stoi(v);
        r.numeric = std::stoi(n);
        r.alphanumeric = std::stoi(a);
        r.byte = std::stoi(b);
        rows.push_back(r);
    }
    return rows;
}

std::string digits(int n) {
    std::string s;
    for (int i = 0; i < n; ++i) s += static_cast<char>('0' + (i * 7 + 3) % 10);
    return s;
}

// ISO/IEC 18004 finder pattern, read at module (x0, y0): 1 dark, 1 light, 3 dark, 1 light, 1 dark rings.
template <class Dark>
void check_finder(Dark dark, int x0, int y0) {
    for (int y = 0; y < 7; ++y) {
        for (int x = 0; x < 7; ++x) {
            const int ring = std::min({x, y, 6 - x, 6 - y});  // 0 outer, 1 light, 2..3 centre
            CAPTURE(x0, y0, x, y);
            CHECK(dark(x0 + x, y0 + y) == (ring != 1));
        }
    }
}

std::uint32_t be32(const std::vector<std::uint8_t>& b, std::size_t at) {
    return (std::uint32_t{b[at]} << 24) | (std::uint32_t{b[at + 1]} << 16) | (std::uint32_t{b[at + 2]} << 8) |
           std::uint32_t{b[at + 3]};
}

}  // namespace

TEST_CASE("Error correction levels are read from their letters", "[tags][qr]") {
    CHECK(pw::ecc_from_string("L") == pw::EccLevel::L);
    CHECK(pw::ecc_from_string("M") == pw::EccLevel::M);
    CHECK(pw::ecc_from_string("Q") == pw::EccLevel::Q);
    CHECK(pw::ecc_from_string("h") == pw::EccLevel::H);
    CHECK_THROWS_AS(pw::ecc_from_string(""), pw::InputError);
    CHECK_THROWS_WITH(pw::ecc_from_string("X"), Catch::Contains("\"X\"") && Catch::Contains("L, M, Q or H"));
}

TEST_CASE("The smallest version holding the payload is chosen, at and past each capacity", "[tags][qr]") {
    const auto table = read_capacity_table();
    REQUIRE(table.size() == 16);
    for (const auto& row : table) {
        const pw::EccLevel level = pw::ecc_from_string(row.level);
        const std::vector<std::pair<std::string, std::string>> at_capacity = {
            {"numeric", digits(row.numeric)},
            {"alphanumeric", std::string(static_cast<std::size_t>(row.alphanumeric), 'A')},
            {"byte", std::string(static_cast<std::size_t>(row.byte), 'a')}};
        for (const auto& [mode, payload] : at_capacity) {
            CAPTURE(row.version, row.level, mode, payload.size());
            const pw::QrMatrix fits = pw::encode_qr(payload, level);
            CHECK(fits.version == row.version);
            CHECK(fits.width == 17 + 4 * row.version);
            const std::string one_more = payload + payload.back();
            const pw::QrMatrix next = pw::encode_qr(one_more, level);
            CHECK(next.version == row.version + 1);
            CHECK(next.width == 17 + 4 * (row.version + 1));
        }
    }
}

TEST_CASE("Plot payloads fit version 1 or 2 at level Q", "[tags][qr]") {
    // "PW1:SORG26-103-V" is 16 alphanumeric characters: capacity of version 1 at Q is 16.
    CHECK(pw::encode_qr(pw::qr_payload("SORG26", 103), pw::EccLevel::Q).version == 1);
    // The longest payload is 23 characters: more than 16 (version 1, Q), at most 29 (version 2, Q).
    const std::string longest = pw::qr_payload("ABCDEFGHIJ", 999999);
    REQUIRE(longest.size() == 23);
    CHECK(pw::encode_qr(longest, pw::EccLevel::Q).version == 2);
    // In byte mode (lower case) the same text would need version 3 at Q (32 bytes; 20 in version 2).
    std::string lower = longest;
    for (char& ch : lower) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    CHECK(pw::encode_qr(lower, pw::EccLevel::Q).version == 3);
}

TEST_CASE("Symbols carry the finder, timing and dark modules of ISO/IEC 18004", "[tags][qr]") {
    for (const auto& payload : {std::string("PW1:SORG26-103-V"), pw::qr_payload("ABCDEFGHIJ", 999999),
                                std::string(60, 'B')}) {
        for (auto level : {pw::EccLevel::L, pw::EccLevel::Q, pw::EccLevel::H}) {
            const pw::QrMatrix m = pw::encode_qr(payload, level);
            CAPTURE(payload, m.version);
            REQUIRE(m.width == 17 + 4 * m.version);
            REQUIRE(m.dark.size() == static_cast<std::size_t>(m.width * m.width));
            const auto dark = [&](int x, int y) { return m.at(x, y); };
            check_finder(dark, 0, 0);
            check_finder(dark, m.width - 7, 0);
            check_finder(dark, 0, m.width - 7);
            for (int i = 0; i < 8; ++i) {  // light separators around the finders
                CHECK_FALSE(m.at(7, i));
                CHECK_FALSE(m.at(i, 7));
                CHECK_FALSE(m.at(m.width - 8, i));
                CHECK_FALSE(m.at(i, m.width - 8));
            }
            for (int i = 8; i < m.width - 8; ++i) {  // timing patterns
                CHECK(m.at(i, 6) == (i % 2 == 0));
                CHECK(m.at(6, i) == (i % 2 == 0));
            }
            CHECK(m.at(8, 4 * m.version + 9));
        }
    }
}

TEST_CASE("Payloads beyond version 40 or empty are refused", "[tags][qr]") {
    CHECK(pw::encode_qr(std::string(4296, 'A'), pw::EccLevel::L).version == 40);
    CHECK_THROWS_WITH(pw::encode_qr(std::string(4297, 'A'), pw::EccLevel::L),
                      Catch::Contains("4297 characters is too long") && Catch::Contains("level L"));
    CHECK_THROWS_AS(pw::encode_qr(std::string(4297, 'A'), pw::EccLevel::L), pw::InputError);
    CHECK_THROWS_AS(pw::encode_qr("", pw::EccLevel::Q), pw::InputError);
    CHECK_THROWS_AS(pw::encode_qr(std::string("PW1\0X", 5), pw::EccLevel::Q), pw::InputError);
    const pw::TagLabel huge{std::string(5000, 'A'), "X", ""};
    CHECK_THROWS_AS(pw::render_tag_png(huge, pw::EccLevel::L, 2), pw::InputError);
    CHECK_THROWS_AS(pw::render_tag_svg(huge, pw::EccLevel::L), pw::InputError);
}

TEST_CASE("PNG tags are 8-bit grey, (modules + 8) x module_px across", "[tags][png]") {
    const std::vector<std::pair<std::string, int>> cases = {
        {"PW1:SORG26-103-V", 1}, {"PW1:SORG26-103-V", 3}, {pw::qr_payload("ABCDEFGHIJ", 999999), 10}};
    for (const auto& [payload, px] : cases) {
        const pw::TagLabel tag{payload, payload.substr(4), ""};
        const auto png = pw::render_tag_png(tag, pw::EccLevel::Q, px);
        const int version = payload.size() <= 16 ? 1 : 2;  // alphanumeric capacity at Q: 16 (v1), 29 (v2)
        const std::uint32_t side = static_cast<std::uint32_t>((17 + 4 * version + 8) * px);
        CAPTURE(payload, px);
        REQUIRE(png.size() > 33);
        const std::vector<std::uint8_t> signature = {137, 80, 78, 71, 13, 10, 26, 10};
        CHECK(std::vector<std::uint8_t>(png.begin(), png.begin() + 8) == signature);
        CHECK(be32(png, 8) == 13);
        CHECK(std::string(png.begin() + 12, png.begin() + 16) == "IHDR");
        CHECK(be32(png, 16) == side);
        CHECK(be32(png, 20) == side);
        CHECK(png[24] == 8);  // bit depth
        CHECK(png[25] == 0);  // colour type: greyscale
    }
    CHECK_THROWS_AS(pw::render_tag_png({"PW1:SORG26-103-V", "", ""}, pw::EccLevel::Q, 0), pw::InputError);
    CHECK_THROWS_AS(pw::render_tag_png({"PW1:SORG26-103-V", "", ""}, pw::EccLevel::Q, 1000), pw::InputError);
}

TEST_CASE("PNG pixels read back by libpng show the quiet zone and the finder patterns", "[tags][png]") {
    const int px = 3;
    const auto bytes = pw::render_tag_png({"PW1:SORG26-103-V", "", ""}, pw::EccLevel::Q, px);
    png_image image{};
    image.version = PNG_IMAGE_VERSION;
    REQUIRE(png_image_begin_read_from_memory(&image, bytes.data(), bytes.size()));
    image.format = PNG_FORMAT_GRAY;
    std::vector<std::uint8_t> pixels(PNG_IMAGE_SIZE(image));
    REQUIRE(png_image_finish_read(&image, nullptr, pixels.data(), 0, nullptr));
    const int side = static_cast<int>(image.width);
    const int modules = 21;  // version 1 (16 alphanumeric characters at Q)
    REQUIRE(side == (modules + 8) * px);
    for (std::uint8_t v : pixels) CHECK((v == 0 || v == 255));
    // Quiet zone: 4 modules of white on every side.
    int quiet_dark = 0;
    for (int y = 0; y < side; ++y)
        for (int x = 0; x < side; ++x) {
            const bool in_quiet = x < 4 * px || y < 4 * px || x >= side - 4 * px || y >= side - 4 * px;
            if (in_quiet && pixels[static_cast<std::size_t>(y * side + x)] != 255) ++quiet_dark;
        }
    CHECK(quiet_dark == 0);
    // Finder patterns, sampling the centre pixel of each module.
    const auto dark = [&](int mx, int my) {
        const int x = (mx + 4) * px + px / 2;
        const int y = (my + 4) * px + px / 2;
        return pixels[static_cast<std::size_t>(y * side + x)] == 0;
    };
    check_finder(dark, 0, 0);
    check_finder(dark, modules - 7, 0);
    check_finder(dark, 0, modules - 7);
}

TEST_CASE("An SVG tag holds the symbol, the human code and the escaped caption", "[tags][svg]") {
    const pw::TagLabel tag{pw::qr_payload("SORG26", 103), pw::human_code("SORG26", 103),
                           "Plot 103 \xC2\xB7 Block 1 & <entry \"A\">"};
    const std::string svg = pw::render_tag_svg(tag, pw::EccLevel::Q);
    CHECK(svg.rfind("<?xml version=\"1.0\" encoding=\"UTF-8\"?>", 0) == 0);
    CHECK_THAT(svg, Catch::Contains("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    CHECK_THAT(svg, Catch::Contains("shape-rendering=\"crispEdges\""));
    CHECK_THAT(svg, Catch::Contains(">SORG26-103-V</text>"));
    CHECK_THAT(svg, Catch::Contains(">Plot 103 \xC2\xB7 Block 1 &amp; &lt;entry &quot;A&quot;&gt;</text>"));
    CHECK_THAT(svg, Catch::Contains("monospace"));
    CHECK(svg.find("PW1:") == std::string::npos);  // the prefix is for scanners, not printed
}

TEST_CASE("A tag sheet holds every tag once, in the given order", "[tags][svg]") {
    std::vector<pw::TagLabel> tags;
    for (int plot = 101; plot <= 107; ++plot)
        tags.push_back({pw::qr_payload("SORG26", plot), pw::human_code("SORG26", plot), ""});
    const std::string svg = pw::render_tag_sheet_svg(tags, pw::EccLevel::Q, 3);
    std::size_t last = 0;
    for (const auto& tag : tags) {
        const std::string text = ">" + tag.human + "</text>";
        const std::size_t at = svg.find(text);
        CAPTURE(tag.human);
        REQUIRE(at != std::string::npos);
        CHECK(at > last);
        CHECK(svg.find(text, at + 1) == std::string::npos);
        last = at;
    }
    CHECK_THROWS_WITH(pw::render_tag_sheet_svg(tags, pw::EccLevel::Q, 0),
                      Catch::Contains("columns 0") && Catch::Contains("at least 1"));
    CHECK_THROWS_AS(pw::render_tag_sheet_svg({}, pw::EccLevel::Q, 3), pw::InputError);
}
