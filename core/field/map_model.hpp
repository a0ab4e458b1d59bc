// The field map's geometry: what to draw where, in metres and in page units, decided here and only painted
// by core/field/map_render.hpp (cairo). Pure, so the drawing's content is unit-tested without a surface.
//
// Page frame: points (1/72 inch), origin at the page's top-left, y downwards. The field frame (x along the
// base line from the reference stake, y 90° anticlockwise, core/design/layout.hpp) is drawn with x to the
// right and y up, at `pt_per_m` points per metre, so the map reads like the field seen from above with the
// base line along the bottom; a north arrow shows where north is on that drawing.
//
// Colours are from the Okabe-Ito palette (M. Okabe and K. Ito, "Color Universal Design (CUD): how to make
// figures and presentations that are friendly to colorblind people", 2008), which colour-blind readers can
// tell apart. The map never relies on colour alone: every plot carries its id (and, with treatments, its
// treatment key T1, T2, ...), each treatment also has its own hatching, guard plots are cross-hatched and
// labelled, blocks are outlined with a thick line and named. A black-and-white print reads the same.
//
// Invariants: plot, guard and block rectangles lie inside the drawing area; plots keep the layout's order
// (walking order); legend entries list the treatments in the spec's order.
#pragma once
#include <array>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"

namespace pw {

struct PagePoint {
    double x = 0, y = 0;
};

struct PageRect {
    double x = 0, y = 0, w = 0, h = 0;  // top-left corner and size
};

struct Rgb {
    double r = 0, g = 0, b = 0;  // 0..1
};

// Okabe & Ito (2008): black, orange, sky blue, bluish green, yellow, blue, vermillion, reddish purple.
struct PaletteColour {
    const char* name;
    const char* hex;   // "#E69F00"
    Rgb rgb;
};
const std::array<PaletteColour, 8>& okabe_ito_palette();

enum class Hatch { None, Forward, Backward, Horizontal, Vertical, Cross, Grid };

// A fill: palette index (-1 white) with a hatching, as used for plots and legend swatches.
struct MapFill {
    int colour = -1;
    Hatch hatch = Hatch::None;
};

struct MapPlot {
    int id = 0;
    int block = 0;
    PageRect rect;
    PageRect harvest;         // w == 0 when the harvest area is the whole plot
    std::string label;        // the plot id
    std::string key;          // "T3" with treatments shown, "" otherwise
    MapFill fill;
};

struct MapBlock {
    int block = 0;
    std::vector<PageRect> outline;  // one rectangle, or one per plot row when the block's box would take in other plots
    PagePoint label_at;             // left end of the label's baseline
    std::string label;              // "Block 1"
};

struct MapArrow {
    PagePoint centre;          // middle of the arrow
    double dx = 0, dy = 0;     // unit direction on the page (y down)
    double length = 0;         // points
    std::string label;
};

struct MapScaleBar {
    PagePoint start;           // left end, on the bar's baseline
    double length_pt = 0;
    double metres = 0;         // what the bar measures
    int segments = 0;          // alternating black and white parts
    std::string label;         // "10 m"
    std::string ratio;         // "1:200 on paper at 100 %"
};

struct LegendEntry {
    enum class Kind { Plot, Block, Guard, Harvest, Stake, Treatment, Text };
    Kind kind = Kind::Text;
    MapFill fill;
    std::string key;           // "T3" for treatments
    std::string text;
    bool continued = false;    // a wrapped continuation of the entry above: text aligned with its text
};

struct MapOptions {
    bool treatments = false;   // refused on a blind trial
    double max_drawing_pt = 520;  // the field's longer side on the page at most this long
};

struct MapModel {
    double width_pt = 0, height_pt = 0;
    double pt_per_m = 0;
    PagePoint origin;          // page position of the stake (field x = 0, y = 0)
    std::string title;
    std::vector<std::string> subtitle;
    PageRect trial;            // the trial area (plots, alleys, guards)
    std::vector<MapPlot> plots;
    std::vector<PageRect> guards;
    std::vector<MapBlock> blocks;
    double plot_font_pt = 9;
    MapArrow north;
    MapArrow gradient;
    std::vector<std::string> gradient_text;  // the gradient's label, wrapped for the legend
    PagePoint stake;
    MapScaleBar scale;
    PagePoint legend_at;       // top-left of the legend column
    std::vector<LegendEntry> legend;
    double legend_line_pt = 16;
};

// The map of a laid-out trial. Throws InputError when treatments are asked for on a blind trial.
MapModel build_map_model(const TrialSpec& spec, const Layout& layout, const MapOptions& options);

// A field-frame point on the map's page.
PagePoint field_to_page(const MapModel& m, double x_m, double y_m);

// The page direction (unit vector, y down) of a compass bearing on a field whose base line has compass
// bearing `x_bearing_deg`, when the field is drawn with x to the right and y up.
PagePoint page_direction(double bearing_deg, double x_bearing_deg);

// The longest "nice" length (1, 2 or 5 times a power of ten metres) not over `max_m`.
double nice_length(double max_m);

}  // namespace pw
