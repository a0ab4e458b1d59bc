// Staking out a laid-out trial: the corners of every plot in the order a crew walks them, with the tape
// distances from the reference stake, and the compass words used on the handheld. Pure geometry in the
// field frame (core/design/layout.hpp): x metres along the base line from the stake (compass bearing
// FieldSpec::x_bearing_deg), y metres at right angles to it, 90° anticlockwise (to the left when facing
// along x). Turning the field frame into east/north and into latitude/longitude is core/field/geodesy.hpp.
//
// Invariants: corners come plot by plot in walking order (Layout::plots), four per plot, anticlockwise
// starting at the corner nearest the stake (smallest x, then smallest y): c1 (x0,y0), c2 (x1,y0),
// c3 (x1,y1), c4 (x0,y1). Compass bearings are degrees clockwise from north in [0, 360).
#pragma once
#include <string>
#include <vector>

#include "core/design/layout.hpp"

namespace pw {

struct EastNorth {
    double east_m = 0;
    double north_m = 0;
};

// A field-frame offset (x along the base line, y 90° anticlockwise) as east/north metres, for a base line
// of compass bearing `x_bearing_deg`: the unit x is (sin b, cos b) in (east, north), the unit y is
// (-cos b, sin b) (a compass bearing b - 90). Plane rotation, exact.
EastNorth field_to_east_north(double x_m, double y_m, double x_bearing_deg);

// The compass bearing of the field-frame direction (dx, dy); 0 for a zero vector.
double field_direction_bearing(double dx_m, double dy_m, double x_bearing_deg);

// Compass bearing, clockwise from north in [0, 360), of an east/north offset (atan2(east, north)).
double compass_bearing(double east_m, double north_m);

// The 16-point compass word of a bearing ("N", "NNE", ..., "NNW"); each sector 22.5° wide, centred on its
// point (common practice of the mariner's compass).
std::string compass_word(double bearing_deg);

struct PlotCorner {
    int plot = 0;          // plot id
    int corner = 0;        // 1..4 as above
    std::string label;     // 8-point compass word of the corner's side of the plot ("SW"), see plot_corners
    double x_m = 0;        // along the base line from the stake (first tape)
    double y_m = 0;        // at right angles to it (second tape)
    double diagonal_m = 0; // straight from the stake: sqrt(x² + y²), a check with a third tape
};

// Every plot corner of the layout in stake order (see above).
std::vector<PlotCorner> plot_corners(const Layout& layout, double x_bearing_deg);

}  // namespace pw
