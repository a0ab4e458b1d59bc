// Plot label geometry (core/tags/label_geometry.hpp): paper sizes, sheet grids and their refusals, label rolls,
// printer dots, the symbol/text split of one label, stake order; and the bytes of the cairo-drawn labels
// (core/tags/label_render.hpp) where the build has cairo.
//
// Sources for the expected values:
//  - ISO 216: A4 is 210 x 297 mm.
//  - ANSI/ASME Y14.1: US Letter is 8.5 x 11 in; the international inch is exactly 25.4 mm (1959 agreement),
//    so Letter is 215.9 x 279.4 mm and a printer of d dots per inch has d / 25.4 dots per mm.
//  - Sheet positions worked by hand in inches for an inch-based sheet (below), converted at 25.4 mm/in.
//  - ISO/IEC 18004: a version 1 symbol is 21 modules across, plus a 4-module quiet zone each side = 29.
//  - ISO 32000-1 (PDF 1.7) 7.5.2 and 7.5.5: a PDF file starts with "%PDF-1." and ends with "%%EOF".
//  - W3C PNG specification: signature, then IHDR (width, height, bit depth, colour type 0 = greyscale); pHYs
//    with unit 1 gives pixels per metre, here dpi / 0.0254 rounded.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "core/tags/label_geometry.hpp"
#include "core/tags/payload.hpp"
#include "core/tags/render.hpp"
#ifdef PW_HAVE_LABELS
#include "core/tags/label_render.hpp"
#endif

namespace {

struct Rect {
    double x0, y0, x1, y1;
};

bool overlap(const Rect& a, const Rect& b) {
    const double eps = 1e-9;
    return a.x0 < b.x1 - eps && b.x0 < a.x1 - eps && a.y0 < b.y1 - eps && b.y0 < a.y1 - eps;
}

pw::SheetGeometry a4_three_by_eight() {
    // A4 with 3 x 8 labels of 70 x 36 mm, 4.5 mm from the top, no side margin or gaps.
    return {pw::Paper::A4, 70.0, 36.0, 3, 8, 4.5, 0.0, 0.0, 0.0};
}

}  // namespace

TEST_CASE("A4 and US Letter have their standard sizes", "[tags][labels]") {
    // ISO 216: A4 = 210 x 297 mm.
    CHECK(pw::paper_size(pw::Paper::A4).width_mm == Approx(210.0).margin(1e-12));
    CHECK(pw::paper_size(pw::Paper::A4).height_mm == Approx(297.0).margin(1e-12));
    // ANSI/ASME Y14.1: Letter = 8.5 x 11 in = 215.9 x 279.4 mm (25.4 mm/in).
    CHECK(pw::paper_size(pw::Paper::Letter).width_mm == Approx(215.9).margin(1e-9));
    CHECK(pw::paper_size(pw::Paper::Letter).height_mm == Approx(279.4).margin(1e-9));
    CHECK(pw::paper_from_string("A4") == pw::Paper::A4);
    CHECK(pw::paper_from_string("letter") == pw::Paper::Letter);
    CHECK_THROWS_WITH(pw::paper_from_string("a3"), Catch::Contains("--page") && Catch::Contains("a4 or letter"));
}

TEST_CASE("Printer dots per millimetre are the dpi over 25.4", "[tags][labels]") {
    // 1 in = 25.4 mm exactly: 203 dpi = 7.992 dots/mm, 300 dpi = 11.811, 600 dpi = 23.622.
    CHECK(pw::dots_per_mm(203) == Approx(7.99212598).epsilon(1e-8));
    CHECK(pw::dots_per_mm(300) == Approx(11.81102362).epsilon(1e-8));
    CHECK(pw::dots_per_mm(600) == Approx(23.62204724).epsilon(1e-8));
    // One inch is exactly dpi dots; two inches at 203 dpi are 406.
    CHECK(pw::mm_to_dots(25.4, 300) == 300);
    CHECK(pw::mm_to_dots(25.4, 600) == 600);
    CHECK(pw::mm_to_dots(50.8, 203) == 406);
    // 50 mm at 203 dpi = 399.6 dots: whole dots that fit, 399.
    CHECK(pw::mm_to_dots(50.0, 203) == 399);
    CHECK_THROWS_AS(pw::dots_per_mm(0), pw::InputError);
}

TEST_CASE("Every sheet preset keeps its labels on the page and apart", "[tags][labels]") {
    REQUIRE(pw::sheet_presets().size() >= 4);
    bool a4 = false, letter = false;
    for (const pw::SheetPreset& p : pw::sheet_presets()) {
        CAPTURE(p.name);
        const pw::SheetGeometry& g = p.geometry;
        REQUIRE_NOTHROW(pw::check_sheet(g));
        a4 = a4 || g.paper == pw::Paper::A4;
        letter = letter || g.paper == pw::Paper::Letter;
        // Names describe the geometry: paper-COLUMNSxROWS.
        CHECK(p.name == std::string(pw::to_string(g.paper)) + "-" + std::to_string(g.columns) + "x" +
                            std::to_string(g.rows));
        // Page sizes of ISO 216 / ANSI Y14.1, written here rather than taken from the code under test.
        const double page_w = g.paper == pw::Paper::A4 ? 210.0 : 8.5 * 25.4;
        const double page_h = g.paper == pw::Paper::A4 ? 297.0 : 11.0 * 25.4;
        std::vector<Rect> placed;
        const int n = pw::labels_per_sheet(g);
        CHECK(n == g.columns * g.rows);
        for (int i = 0; i < n; ++i) {
            const pw::LabelSlot s = pw::sheet_slot(g, static_cast<std::size_t>(i));
            CHECK(s.page == 0);
            const Rect r{s.x_mm, s.y_mm, s.x_mm + g.label_width_mm, s.y_mm + g.label_height_mm};
            CHECK(r.x0 >= 0);
            CHECK(r.y0 >= 0);
            CHECK(r.x1 <= page_w + 1e-9);
            CHECK(r.y1 <= page_h + 1e-9);
            for (const Rect& q : placed) CHECK_FALSE(overlap(r, q));
            placed.push_back(r);
        }
        CHECK(pw::sheet_slot(g, static_cast<std::size_t>(n)).page == 1);
        CHECK(pw::sheet_preset(p.name).name == p.name);
    }
    CHECK(a4);
    CHECK(letter);
    CHECK_THROWS_WITH(pw::sheet_preset("a4-9x99"), Catch::Contains("--sheet") && Catch::Contains("a4-3x8"));
}

TEST_CASE("Labels sit at the sheet's pitch, across then down, sheet after sheet", "[tags][labels]") {
    // An inch-based sheet worked by hand: labels 2 5/8 x 1 in, 3 across, 10 down, top 1/2 in, left 3/16 in,
    // 1/8 in between columns. The 3rd column's left edge is 3/16 + 2 x (2 5/8 + 1/8) = 5 11/16 in = 144.4625 mm;
    // the 10th row's top edge is 1/2 + 9 x 1 = 9.5 in = 241.3 mm.
    const double in = 25.4;
    const pw::SheetGeometry g{pw::Paper::Letter, 2.625 * in, 1.0 * in, 3, 10, 0.5 * in, 3.0 / 16 * in,
                              1.0 / 8 * in, 0.0};
    REQUIRE_NOTHROW(pw::check_sheet(g));
    const pw::LabelSlot last = pw::sheet_slot(g, 29);
    CHECK(last.page == 0);
    CHECK(last.column == 2);
    CHECK(last.row == 9);
    CHECK(last.x_mm == Approx(144.4625).margin(1e-9));
    CHECK(last.y_mm == Approx(241.3).margin(1e-9));
    // Label 31 (index 30) starts the second sheet at the first label's corner.
    const pw::LabelSlot next = pw::sheet_slot(g, 30);
    CHECK(next.page == 1);
    CHECK(next.x_mm == Approx(3.0 / 16 * in).margin(1e-9));
    CHECK(next.y_mm == Approx(0.5 * in).margin(1e-9));
    // 24 plots of the demo trial need 1 sheet of 30; 61 labels need 3.
    CHECK(pw::sheets_needed(g, 24) == 1);
    CHECK(pw::sheets_needed(g, 61) == 3);
    // Index 4 on A4 3 x 8 (70 x 36 mm, top 4.5): second row, second column: x = 70, y = 4.5 + 36 = 40.5.
    const pw::LabelSlot s = pw::sheet_slot(a4_three_by_eight(), 4);
    CHECK(s.x_mm == Approx(70.0).margin(1e-12));
    CHECK(s.y_mm == Approx(40.5).margin(1e-12));
}

TEST_CASE("A grid that overflows the page is refused naming the option and the overflow in mm", "[tags][labels]") {
    SECTION("too wide: 5 mm left margin + 3 x 70 mm on A4 (210 mm wide, ISO 216) is 5 mm over") {
        pw::SheetGeometry g = a4_three_by_eight();
        g.left_mm = 5.0;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--left 5") && Catch::Contains("--columns 3") &&
                                                  Catch::Contains("--label-width 70") &&
                                                  Catch::Contains("by 5 mm") && Catch::Contains("210 mm"));
    }
    SECTION("too tall: 8 rows of 36 mm with 2 mm gaps from 4.5 mm on A4 (297 mm) is 9.5 mm over") {
        pw::SheetGeometry g = a4_three_by_eight();
        g.gap_y_mm = 2.0;   // 4.5 + 8 x 36 + 7 x 2 = 306.5
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--gap-y 2") && Catch::Contains("--rows 8") &&
                                                  Catch::Contains("by 9.5 mm") && Catch::Contains("297 mm") &&
                                                  Catch::Contains("306.5 mm"));
    }
    SECTION("the A4 grid on Letter: 8 x 36 + 4.5 = 292.5 mm is 13.1 mm taller than 279.4 mm (ANSI Y14.1)") {
        pw::SheetGeometry g = a4_three_by_eight();
        g.paper = pw::Paper::Letter;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("letter page height") && Catch::Contains("by 13.1 mm"));
    }
    SECTION("zero and negative sizes name their option") {
        pw::SheetGeometry g = a4_three_by_eight();
        g.label_width_mm = 0;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--label-width 0 mm"));
        g = a4_three_by_eight();
        g.label_height_mm = -1;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--label-height -1 mm"));
        g = a4_three_by_eight();
        g.rows = 0;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--rows 0"));
        g = a4_three_by_eight();
        g.columns = 0;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--columns 0"));
        g = a4_three_by_eight();
        g.gap_x_mm = -0.5;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--gap-x -0.5 mm") && Catch::Contains("negative"));
        g = a4_three_by_eight();
        g.top_mm = -2;
        CHECK_THROWS_WITH(pw::check_sheet(g), Catch::Contains("--top -2 mm"));
    }
    SECTION("a grid that exactly fills the page is accepted") {
        // 3 x 70 = 210 and 8 x 37.125 = 297: edge to edge on A4.
        pw::SheetGeometry g{pw::Paper::A4, 70.0, 37.125, 3, 8, 0.0, 0.0, 0.0, 0.0};
        CHECK_NOTHROW(pw::check_sheet(g));
    }
}

TEST_CASE("Label roll sizes are read as WIDTHxHEIGHT in millimetres", "[tags][labels]") {
    const pw::LabelSize a = pw::parse_roll("50x25");
    CHECK(a.width_mm == 50.0);
    CHECK(a.height_mm == 25.0);
    const pw::LabelSize b = pw::parse_roll("50.8X25.4");
    CHECK(b.width_mm == Approx(50.8));
    CHECK(b.height_mm == Approx(25.4));
    for (const char* bad : {"50", "x25", "50x", "50x0", "0x25", "-5x10", "50x25x3", "fifty", " 50x25", "50 x25",
                            "1e9x10"}) {
        CAPTURE(bad);
        CHECK_THROWS_WITH(pw::parse_roll(bad), Catch::Contains("--roll"));
    }
}

TEST_CASE("A label's symbol takes whole dots and keeps its quiet zone clear of text", "[tags][labels]") {
    // A 50 x 25 mm label at 203 dpi is 399 x 199 dots; 1 mm (8 dots) kept blank along each edge leaves
    // 383 x 183. A version 1 symbol with its quiet zone is 29 modules (ISO/IEC 18004): 183 / 29 = 6.3, so
    // 6 dots a module and 174 dots a side, text beside it.
    const pw::TextNeed text{150.0, 100.0};
    const pw::LabelArrangement a = pw::arrange_label(399, 199, 8, 29, text, true, 1.0);
    CHECK(a.text_beside);
    CHECK(a.module == 6.0);
    CHECK(a.symbol_side == 174.0);
    CHECK(a.symbol_x == 8.0);
    CHECK(a.symbol_y == std::floor(8 + (183 - 174) / 2.0));
    // Text starts where the quiet zone ends and stays inside the label's blank edge.
    CHECK(a.text_x >= a.symbol_x + a.symbol_side);
    CHECK(a.text_x + a.text_w <= 399 - 8);
    CHECK(a.text_w >= text.min_width);

    SECTION("a tall label puts the text under the symbol") {
        // 30 x 45 mm at 300 dpi = 354 x 531 dots; inset 12 -> 330 x 507; below: min(330, 507 - 100) = 330 ->
        // 330 / 29 = 11.4 -> 11 dots; beside is impossible (330 - 150 = 180 wide leaves 6 dots a module).
        const pw::LabelArrangement t = pw::arrange_label(354, 531, 12, 29, text, true, 1.0);
        CHECK_FALSE(t.text_beside);
        CHECK(t.module == 11.0);
        CHECK(t.text_y >= t.symbol_y + t.symbol_side);
        CHECK(t.text_y + t.text_h <= 531 - 12);
    }
    SECTION("in millimetres the module need not be whole") {
        const pw::LabelArrangement m = pw::arrange_label(70, 36, 1, 29, {20, 10}, false, 0.25);
        CHECK(m.text_beside);
        CHECK(m.module == Approx(34.0 / 29));
        CHECK(m.symbol_side == Approx(34.0));
    }
    SECTION("a label too small for the symbol and its text is refused") {
        CHECK_THROWS_AS(pw::arrange_label(40, 20, 8, 29, text, true, 1.0), pw::InputError);
        CHECK_THROWS_WITH(pw::arrange_label(20, 10, 1, 29, {20, 10}, false, 0.25), Catch::Contains("too small"));
    }
}

TEST_CASE("Stake order runs by field row from the stake, then by column", "[tags][labels]") {
    // Six plots in two rows laid serpentine in walking order (common practice): row 1 walked col 1 -> 3,
    // row 2 walked back col 3 -> 1. Staked from the reference stake, row by row, each row from column 1.
    std::vector<pw::PlotPlacement> walk(6);
    const int rows[] = {1, 1, 1, 2, 2, 2};
    const int cols[] = {1, 2, 3, 3, 2, 1};
    const int ids[] = {101, 102, 103, 201, 202, 203};
    for (int i = 0; i < 6; ++i) {
        walk[static_cast<std::size_t>(i)].id = ids[i];
        walk[static_cast<std::size_t>(i)].row = rows[i];
        walk[static_cast<std::size_t>(i)].col = cols[i];
        walk[static_cast<std::size_t>(i)].walk_order = i + 1;
    }
    auto ids_of = [](const std::vector<pw::PlotPlacement>& v) {
        std::vector<int> out;
        for (const auto& p : v) out.push_back(p.id);
        return out;
    };
    CHECK(ids_of(pw::order_plots(walk, pw::LabelOrder::Walk)) == std::vector<int>{101, 102, 103, 201, 202, 203});
    CHECK(ids_of(pw::order_plots(walk, pw::LabelOrder::Stake)) == std::vector<int>{101, 102, 103, 203, 202, 201});
    CHECK(pw::label_order_from_string("stake") == pw::LabelOrder::Stake);
    CHECK_THROWS_WITH(pw::label_order_from_string("bogus"), Catch::Contains("--order"));
}

#ifdef PW_HAVE_LABELS
namespace {

std::uint32_t be32(const std::string& b, std::size_t at) {
    auto u = [&](std::size_t i) { return static_cast<std::uint32_t>(static_cast<unsigned char>(b[i])); };
    return (u(at) << 24) | (u(at + 1) << 16) | (u(at + 2) << 8) | u(at + 3);
}

std::vector<pw::PlotLabel> demo_labels(int n) {
    std::vector<pw::PlotLabel> v;
    for (int i = 0; i < n; ++i) {
        const int plot = 101 + i;
        v.push_back({pw::qr_payload("SORG26", plot), pw::human_code("SORG26", plot),
                     {"Plot " + std::to_string(plot) + "  Block 1", "Trial SORG26"}});
    }
    return v;
}

}  // namespace

TEST_CASE("Label sheets and rolls are PDF documents with one page per sheet or label", "[tags][labels][pdf]") {
    const auto labels = demo_labels(25);
    const pw::PdfInfo info{"SORG26 plot labels", "2026-06-14T08:00:00Z"};
    const pw::LabelDocument sheets =
        pw::render_label_sheets_pdf(labels, pw::sheet_preset("a4-3x8").geometry, pw::EccLevel::Q, info);
    // ISO 32000-1 7.5.2 / 7.5.5: header and end-of-file marker.
    CHECK(sheets.pdf.rfind("%PDF-1.", 0) == 0);
    CHECK(sheets.pdf.find("%%EOF") != std::string::npos);
    CHECK(sheets.pages == 2);   // 25 labels, 24 a sheet
    // 70 x 36 mm less 1 mm each edge: 34 mm for 29 modules.
    CHECK(sheets.smallest_module_mm == Approx(34.0 / 29));
    const pw::LabelDocument roll = pw::render_label_roll_pdf(labels, {50, 25}, pw::EccLevel::H, info);
    CHECK(roll.pdf.rfind("%PDF-1.", 0) == 0);
    CHECK(roll.pages == 25);
    pw::SheetGeometry bad = pw::sheet_preset("a4-3x8").geometry;
    bad.columns = 4;
    CHECK_THROWS_WITH(pw::render_label_sheets_pdf(labels, bad, pw::EccLevel::Q, info),
                      Catch::Contains("--columns 4"));
}

TEST_CASE("Thermal labels are 1-bit greyscale PNGs at the printer's resolution", "[tags][labels][png]") {
    const auto label = demo_labels(1).front();
    for (int dpi : {203, 300, 600}) {
        CAPTURE(dpi);
        const pw::ThermalLabel t = pw::render_label_png(label, {50, 25}, dpi, pw::EccLevel::Q);
        const std::string b(t.png.begin(), t.png.end());
        REQUIRE(b.size() > 33);
        CHECK(b.substr(0, 8) == std::string("\x89PNG\r\n\x1a\n", 8));
        CHECK(b.substr(12, 4) == "IHDR");
        // 50 x 25 mm in whole dots: floor(50 dpi / 25.4) x floor(25 dpi / 25.4).
        CHECK(be32(b, 16) == static_cast<std::uint32_t>(std::floor(50 * dpi / 25.4)));
        CHECK(be32(b, 20) == static_cast<std::uint32_t>(std::floor(25 * dpi / 25.4)));
        CHECK(static_cast<int>(b[24]) == 1);   // bit depth
        CHECK(static_cast<int>(b[25]) == 0);   // colour type: greyscale
        const std::size_t phys = b.find("pHYs");
        REQUIRE(phys != std::string::npos);
        CHECK(be32(b, phys + 4) == static_cast<std::uint32_t>(std::lround(dpi / 0.0254)));
        CHECK(static_cast<int>(b[phys + 12]) == 1);   // unit: metre
        CHECK(t.module_dots >= 1);
    }
    CHECK_THROWS_WITH(pw::render_label_png(label, {12, 6}, 203, pw::EccLevel::H), Catch::Contains("too small"));
}
#endif
