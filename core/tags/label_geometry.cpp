// Label sheets, rolls, printer dots, the symbol/text split of one label, and the print order (label_geometry.hpp).
//
// Sources: ISO 216 (A4 = 210 x 297 mm); ANSI/ASME Y14.1 (US Letter = 8.5 x 11 in) with the international inch
// of exactly 25.4 mm; ISO/IEC 18004 for the 4-module quiet zone that arrange_label keeps free of text.
// The sheet presets describe common die-cut label layouts by their geometry (label size, grid, margins,
// pitch); their names are plotwright's own.
#include "core/tags/label_geometry.hpp"

#include "core/error.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdlib>

namespace pw {
namespace {

constexpr double kMmPerInch = 25.4;       // international inch (1959), exact
constexpr double kOverflowTolerance = 1e-6;  // mm: rounding of decimal inputs is not an overflow
constexpr double kMaxRollMm = 1000.0;

std::string lower(std::string s) {
    for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return s;
}

// A number for a message: up to 2 decimals, trailing zeros dropped ("70", "2.5", "4.76").
std::string num(double v) {
    std::string s = fmt::format("{:.2f}", v);
    while (!s.empty() && s.back() == '0') s.pop_back();
    if (!s.empty() && s.back() == '.') s.pop_back();
    return s == "-0" ? "0" : s;
}

void require_positive(double v, const char* option, const char* what) {
    if (!(v > 0)) throw InputError(fmt::format("{} {} mm: {} must be greater than 0 mm", option, num(v), what));
}

void require_not_negative(double v, const char* option, const char* what) {
    if (!(v >= 0)) throw InputError(fmt::format("{} {} mm: {} cannot be negative", option, num(v), what));
}

// One axis of a sheet: margin + count * size + (count - 1) * gap must not pass the page edge.
void check_axis(double page, const char* page_side, Paper paper, double margin, const char* margin_opt, int count,
                const char* count_opt, double size, const char* size_opt, double gap, const char* gap_opt) {
    const double used = margin + count * size + (count - 1) * gap;
    const double over = used - page;
    if (over > kOverflowTolerance)
        throw InputError(fmt::format(
            "the labels overflow the {} page {} ({} mm) by {} mm: {} {} + {} {} x {} {} + {} x {} {} = {} mm",
            to_string(paper), page_side, num(page), num(over), margin_opt, num(margin), count_opt, count, size_opt,
            num(size), count - 1, gap_opt, num(gap), num(used)));
}

}  // namespace

PaperSize paper_size(Paper paper) {
    switch (paper) {
        case Paper::A4: return {210.0, 297.0};                                  // ISO 216
        case Paper::Letter: return {8.5 * kMmPerInch, 11.0 * kMmPerInch};       // ANSI/ASME Y14.1
    }
    return {210.0, 297.0};
}

const char* to_string(Paper paper) {
    switch (paper) {
        case Paper::A4: return "a4";
        case Paper::Letter: return "letter";
    }
    return "a4";
}

Paper paper_from_string(const std::string& s) {
    const std::string l = lower(s);
    if (l == "a4") return Paper::A4;
    if (l == "letter") return Paper::Letter;
    throw InputError(fmt::format("--page \"{}\": expected a4 or letter", s));
}

const std::vector<SheetPreset>& sheet_presets() {
    // Inch-based sheets are given in inches times 25.4 so that the millimetres are exact.
    constexpr double in = kMmPerInch;
    static const std::vector<SheetPreset> presets = {
        {"a4-2x7", "99.1 x 38.1 mm, 14 a page: large tags for stakes",
         {Paper::A4, 99.1, 38.1, 2, 7, 15.15, 4.65, 2.5, 0.0}},
        {"a4-3x7", "63.5 x 38.1 mm, 21 a page", {Paper::A4, 63.5, 38.1, 3, 7, 15.15, 7.25, 2.5, 0.0}},
        {"a4-3x8", "70 x 36 mm, 24 a page, no side margins", {Paper::A4, 70.0, 36.0, 3, 8, 4.5, 0.0, 0.0, 0.0}},
        {"a4-4x10", "48.5 x 25.4 mm, 40 a page: small tags for bags and pots",
         {Paper::A4, 48.5, 25.4, 4, 10, 21.5, 8.0, 0.0, 0.0}},
        {"letter-2x5", "4 x 2 in (101.6 x 50.8 mm), 10 a page: large tags for stakes",
         {Paper::Letter, 4 * in, 2 * in, 2, 5, 0.5 * in, 5.0 / 32 * in, 3.0 / 16 * in, 0.0}},
        {"letter-2x10", "4 x 1 in (101.6 x 25.4 mm), 20 a page",
         {Paper::Letter, 4 * in, 1 * in, 2, 10, 0.5 * in, 5.0 / 32 * in, 3.0 / 16 * in, 0.0}},
        {"letter-3x10", "2 5/8 x 1 in (66.7 x 25.4 mm), 30 a page",
         {Paper::Letter, 2.625 * in, 1 * in, 3, 10, 0.5 * in, 3.0 / 16 * in, 1.0 / 8 * in, 0.0}},
    };
    return presets;
}

const SheetPreset& sheet_preset(const std::string& name) {
    const std::string l = lower(name);
    std::string known;
    for (const SheetPreset& p : sheet_presets()) {
        if (p.name == l) return p;
        known += (known.empty() ? "" : ", ") + p.name;
    }
    throw InputError(fmt::format("--sheet \"{}\": unknown sheet; the known sheets are {} (or give the grid with "
                                 "--label-width, --label-height, --columns, --rows, --top, --left, --gap-x, --gap-y)",
                                 name, known));
}

void check_sheet(const SheetGeometry& g) {
    require_positive(g.label_width_mm, "--label-width", "a label's width");
    require_positive(g.label_height_mm, "--label-height", "a label's height");
    if (g.columns < 1) throw InputError(fmt::format("--columns {}: a sheet needs at least 1 column", g.columns));
    if (g.rows < 1) throw InputError(fmt::format("--rows {}: a sheet needs at least 1 row", g.rows));
    require_not_negative(g.top_mm, "--top", "the top margin");
    require_not_negative(g.left_mm, "--left", "the left margin");
    require_not_negative(g.gap_x_mm, "--gap-x", "the gap between columns");
    require_not_negative(g.gap_y_mm, "--gap-y", "the gap between rows");
    const PaperSize page = paper_size(g.paper);
    check_axis(page.width_mm, "width", g.paper, g.left_mm, "--left", g.columns, "--columns", g.label_width_mm,
               "--label-width", g.gap_x_mm, "--gap-x");
    check_axis(page.height_mm, "height", g.paper, g.top_mm, "--top", g.rows, "--rows", g.label_height_mm,
               "--label-height", g.gap_y_mm, "--gap-y");
}

int labels_per_sheet(const SheetGeometry& g) { return g.columns * g.rows; }

LabelSlot sheet_slot(const SheetGeometry& g, std::size_t index) {
    const auto per_sheet = static_cast<std::size_t>(labels_per_sheet(g));
    if (per_sheet == 0) throw InputError("a sheet with no labels (check the geometry first)");
    const std::size_t on_page = index % per_sheet;
    LabelSlot s;
    s.page = index / per_sheet;
    s.column = static_cast<int>(on_page % static_cast<std::size_t>(g.columns));
    s.row = static_cast<int>(on_page / static_cast<std::size_t>(g.columns));
    // Pitch = label size + gap, from the first label's corner.
    s.x_mm = g.left_mm + s.column * (g.label_width_mm + g.gap_x_mm);
    s.y_mm = g.top_mm + s.row * (g.label_height_mm + g.gap_y_mm);
    return s;
}

std::size_t sheets_needed(const SheetGeometry& g, std::size_t labels) {
    const auto per_sheet = static_cast<std::size_t>(labels_per_sheet(g));
    if (per_sheet == 0) throw InputError("a sheet with no labels (check the geometry first)");
    return (labels + per_sheet - 1) / per_sheet;
}

LabelSize parse_roll(const std::string& text) {
    const std::string expected = fmt::format(
        "--roll \"{}\": expected the label size in millimetres as WIDTHxHEIGHT, e.g. 50x25 or 50.8x25.4", text);
    const std::size_t x = text.find_first_of("xX");
    if (x == std::string::npos || text.find_first_of("xX", x + 1) != std::string::npos) throw InputError(expected);
    auto number = [&](const std::string& part) {
        if (part.empty() || std::isspace(static_cast<unsigned char>(part.front())) ||
            !(std::isdigit(static_cast<unsigned char>(part.front())) || part.front() == '.'))
            throw InputError(expected);
        char* end = nullptr;
        errno = 0;
        const double v = std::strtod(part.c_str(), &end);
        if (errno != 0 || end != part.c_str() + part.size() || !std::isfinite(v)) throw InputError(expected);
        return v;
    };
    LabelSize s{number(text.substr(0, x)), number(text.substr(x + 1))};
    if (!(s.width_mm > 0) || !(s.height_mm > 0))
        throw InputError(fmt::format("--roll {}: a label's width and height must be greater than 0 mm", text));
    if (s.width_mm > kMaxRollMm || s.height_mm > kMaxRollMm)
        throw InputError(fmt::format("--roll {}: a label of more than {} mm a side is not a label", text,
                                     num(kMaxRollMm)));
    return s;
}

double dots_per_mm(int dpi) {
    if (dpi < 1) throw InputError(fmt::format("--dpi {}: expected a positive printer resolution", dpi));
    return dpi / kMmPerInch;
}

int mm_to_dots(double mm, int dpi) {
    // The small epsilon keeps an exact multiple (25.4 mm at 300 dpi = 300 dots) from rounding down by one.
    return static_cast<int>(std::floor(mm * dots_per_mm(dpi) + 1e-9));
}

LabelArrangement arrange_label(double width, double height, double inset, int symbol_modules, const TextNeed& text,
                               bool whole_modules, double min_module) {
    if (symbol_modules < 1) throw InputError(fmt::format("a QR symbol of {} modules", symbol_modules));
    const double inner_w = width - 2 * inset;
    const double inner_h = height - 2 * inset;
    const auto module_for = [&](double side) {
        const double m = side / symbol_modules;
        return whole_modules ? std::floor(m + 1e-9) : m;
    };
    // Text to the right: the symbol gets the full height, the text the width left over (and must fit the height).
    double beside = 0;
    if (inner_h >= text.min_height && inner_w - text.min_width > 0)
        beside = module_for(std::min(inner_h, inner_w - text.min_width));
    // Text below: the symbol gets the full width, the text the height left over (and must fit the width).
    double below = 0;
    if (inner_w >= text.min_width && inner_h - text.min_height > 0)
        below = module_for(std::min(inner_w, inner_h - text.min_height));

    LabelArrangement a;
    a.modules = symbol_modules;
    a.text_beside = beside >= below;
    a.module = std::max(beside, below);
    if (!(a.module > 0) || a.module < min_module)
        throw InputError(fmt::format(
            "a label of {} x {} (with {} kept blank along each edge) is too small: a QR symbol of {} modules "
            "(quiet zone included) at {} or more a module needs {} a side, and its text {} x {} beside or below it",
            num(width), num(height), num(inset), symbol_modules, num(min_module), num(symbol_modules * min_module),
            num(text.min_width), num(text.min_height)));
    a.symbol_side = a.module * symbol_modules;
    const auto centre = [&](double room) { return whole_modules ? std::floor(room / 2) : room / 2; };
    if (a.text_beside) {
        a.symbol_x = inset;
        a.symbol_y = inset + centre(inner_h - a.symbol_side);
        a.text_x = inset + a.symbol_side;
        a.text_y = inset;
        a.text_w = inner_w - a.symbol_side;
        a.text_h = inner_h;
    } else {
        a.symbol_x = inset + centre(inner_w - a.symbol_side);
        a.symbol_y = inset;
        a.text_x = inset;
        a.text_y = inset + a.symbol_side;
        a.text_w = inner_w;
        a.text_h = inner_h - a.symbol_side;
    }
    return a;
}

LabelOrder label_order_from_string(const std::string& s) {
    const std::string l = lower(s);
    if (l == "walk") return LabelOrder::Walk;
    if (l == "stake") return LabelOrder::Stake;
    throw InputError(fmt::format("--order \"{}\": expected walk (walking order) or stake (field row, then column)", s));
}

std::vector<PlotPlacement> order_plots(const std::vector<PlotPlacement>& plots_in_walk_order, LabelOrder order) {
    std::vector<PlotPlacement> out = plots_in_walk_order;
    if (order == LabelOrder::Stake)
        std::stable_sort(out.begin(), out.end(), [](const PlotPlacement& a, const PlotPlacement& b) {
            if (a.row != b.row) return a.row < b.row;
            if (a.col != b.col) return a.col < b.col;
            return a.id < b.id;
        });
    return out;
}

}  // namespace pw
