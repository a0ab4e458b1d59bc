// Where plot labels go on paper: label sheets (a grid of die-cut labels on an A4 or US Letter page), label
// rolls (one label per page, for roll printers), the printer-dot grid of thermal printers, how a QR symbol and
// its text share one label, and the order in which the labels are printed. Pure arithmetic: the drawing is in
// label_render.hpp, the files are written by the tags command.
//
// Units: millimetres on paper, y growing DOWN from the top edge of the page (the way sheet makers give top
// margins). Printer dots for thermal labels. arrange_label works in any unit (mm or dots).
// Invariants: a SheetGeometry that passed check_sheet has every label inside the page; arrange_label never
// puts text inside the symbol's quiet zone (ISO/IEC 18004: 4 light modules on every side).
#pragma once
#include <cstddef>
#include <string>
#include <vector>

#include "core/design/layout.hpp"

namespace pw {

// ---- paper ----------------------------------------------------------------------------------------------
enum class Paper { A4, Letter };

struct PaperSize {
    double width_mm = 0;
    double height_mm = 0;
};

// A4 is 210 x 297 mm (ISO 216); US Letter is 8.5 x 11 in = 215.9 x 279.4 mm (ANSI/ASME Y14.1, 1 in = 25.4 mm).
PaperSize paper_size(Paper paper);
const char* to_string(Paper paper);             // "a4", "letter"
Paper paper_from_string(const std::string& s);  // "a4" / "letter", any case; throws InputError naming --page

// ---- label sheets ---------------------------------------------------------------------------------------
// A page of equal labels in `columns` x `rows`: the first label's top-left corner at (left_mm, top_mm) from
// the page's top-left corner, neighbours gap_x_mm apart across and gap_y_mm apart down.
struct SheetGeometry {
    Paper paper = Paper::A4;
    double label_width_mm = 0;
    double label_height_mm = 0;
    int columns = 0;
    int rows = 0;
    double top_mm = 0;
    double left_mm = 0;
    double gap_x_mm = 0;
    double gap_y_mm = 0;
};

struct SheetPreset {
    std::string name;          // describes the geometry: paper-COLUMNSxROWS ("a4-3x8")
    std::string description;   // label size and what it suits
    SheetGeometry geometry;
};

// The named sheet geometries plotwright knows, in the order docs/tags.md lists them.
const std::vector<SheetPreset>& sheet_presets();
// Throws InputError naming --sheet and listing the known names.
const SheetPreset& sheet_preset(const std::string& name);

// Refuses (InputError) a geometry whose sizes are not positive, whose margins or gaps are negative, or whose
// labels overflow the page; the message names the command-line option at fault (--label-width, --columns,
// --left, ...) and the overflow in millimetres.
void check_sheet(const SheetGeometry& g);

// Top-left corner of one label on its page, y down from the page's top edge.
struct LabelSlot {
    std::size_t page = 0;      // 0-based sheet number
    int column = 0;            // 0-based
    int row = 0;               // 0-based
    double x_mm = 0;
    double y_mm = 0;
};

int labels_per_sheet(const SheetGeometry& g);                           // columns * rows
// The index-th label (0-based) in reading order: across a row left to right, rows top to bottom, then the
// next sheet. The geometry must have passed check_sheet.
LabelSlot sheet_slot(const SheetGeometry& g, std::size_t index);
std::size_t sheets_needed(const SheetGeometry& g, std::size_t labels);  // ceil(labels / per sheet)

// ---- label rolls ----------------------------------------------------------------------------------------
struct LabelSize {
    double width_mm = 0;
    double height_mm = 0;
};

// "WxH" in millimetres, e.g. "50x25" or "50.8x25.4" ('x' or 'X'); both positive and at most 1000 mm.
// Throws InputError naming --roll and the expected form.
LabelSize parse_roll(const std::string& text);

// ---- printer dots ---------------------------------------------------------------------------------------
// Dots per millimetre of a printer of `dpi` dots per inch: dpi / 25.4 (1 in = 25.4 mm exactly).
double dots_per_mm(int dpi);
// Whole dots that fit in `mm` at `dpi` (rounded down, so a drawing never exceeds the label).
int mm_to_dots(double mm, int dpi);

// ---- one label: symbol and text -------------------------------------------------------------------------
// What the text beside or under the symbol needs at its smallest readable size, in the label's unit.
struct TextNeed {
    double min_width = 0;
    double min_height = 0;
};

// The symbol (with its quiet zone) and the text box of one label, in the label's unit (mm or dots), measured
// from the label's top-left corner.
struct LabelArrangement {
    bool text_beside = false;   // text right of the symbol (else below it)
    int modules = 0;            // symbol side in modules, quiet zone included
    double module = 0;          // side of one module; a whole number when whole_modules was asked
    double symbol_x = 0;        // top-left corner of the quiet zone
    double symbol_y = 0;
    double symbol_side = 0;     // modules * module
    double text_x = 0;
    double text_y = 0;
    double text_w = 0;
    double text_h = 0;
};

// Places the largest symbol of `symbol_modules` (quiet zone included) that leaves room for `text`, inside a
// label of width x height with `inset` kept blank along every edge: either the symbol at the left with the text
// to its right, or the symbol at the top with the text below, whichever gives the larger symbol. With
// whole_modules the module side and every position are whole units (printer dots: no resampling blur).
// Throws InputError when no module of at least `min_module` fits, naming the label size and what it needs.
LabelArrangement arrange_label(double width, double height, double inset, int symbol_modules,
                               const TextNeed& text, bool whole_modules, double min_module);

// ---- print order ----------------------------------------------------------------------------------------
// walk:  the layout's walking order (Layout::plots as stored: block by block, serpentine).
// stake: the order in which the plots are staked out from the reference stake: by field row (row 1 nearest
//        the stake first), then by column within a row (column 1 nearest the stake first); ties by plot id.
enum class LabelOrder { Walk, Stake };
LabelOrder label_order_from_string(const std::string& s);   // "walk" / "stake"; throws InputError naming --order
std::vector<PlotPlacement> order_plots(const std::vector<PlotPlacement>& plots_in_walk_order, LabelOrder order);

}  // namespace pw
