// The report's pictures as SVG text: the field map coloured by a trait or by its residuals, the means with
// their intervals, the residuals against recording time; and the colour scales they use (report_html.hpp).
//
// Every picture is drawn in its own user units with a viewBox, so it scales to the page; numbers that a
// reader or a test may want back are kept beside the drawing in data-* attributes at full precision.
// Colour never carries information alone: plots print their value, missing plots are hatched, outliers are
// outlined and marked "!", observers are told apart by shape.
#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <set>

#include "firmware_app/report_html.hpp"

namespace pw::report {
namespace {

std::string esc(const std::string& s) { return html_escape(s); }
std::string full(double v) { return fmt::format("{:.17g}", v); }
std::string px(double v) { return fmt::format("{:.2f}", v); }

// WCAG 2.1 relative luminance of an sRGB colour "#rrggbb" (W3C, Web Content Accessibility Guidelines 2.1,
// definition "relative luminance"): each channel c/255 linearised as c/12.92 when c <= 0.04045, else
// ((c + 0.055)/1.055)^2.4; L = 0.2126 R + 0.7152 G + 0.0722 B.
double relative_luminance(const char* hex) {
    unsigned r = 0, g = 0, b = 0;
    std::sscanf(hex + 1, "%2x%2x%2x", &r, &g, &b);
    auto lin = [](unsigned c) {
        const double s = c / 255.0;
        return s <= 0.04045 ? s / 12.92 : std::pow((s + 0.055) / 1.055, 2.4);
    };
    return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}

// White text when it contrasts more than black: the WCAG contrast ratio (L1 + 0.05)/(L2 + 0.05) with white
// (L = 1) exceeds that with black (L = 0) exactly when L < √(1.05 · 0.05) − 0.05 ≈ 0.179.
bool light_text_on(const char* hex) { return relative_luminance(hex) < std::sqrt(1.05 * 0.05) - 0.05; }

std::vector<ColourClass> make_scale(const std::vector<const char*>& hexes) {
    std::vector<ColourClass> out;
    for (const char* h : hexes) out.push_back(ColourClass{h, light_text_on(h)});
    return out;
}

// `v` as an int within lo..hi, or `otherwise` when it is not finite. Clamped while still a double: converting
// an out-of-range double to int is undefined, and x86-64 and aarch64 do differ (x86-64 gives INT_MIN,
// aarch64 saturates), so a step of 0 once asked fmt for 2^31 decimals on aarch64.
int clamped_int(double v, int lo, int hi, int otherwise) {
    return std::isfinite(v) ? static_cast<int>(std::clamp(v, static_cast<double>(lo), static_cast<double>(hi)))
                            : otherwise;
}

// Fits `chars` characters of DejaVu/Helvetica-like text into w × h: about 0.6 em per character and 1.25 em
// per line (common practice for a sans-serif face). 0 when it would be smaller than `min_size`.
double fit_font(std::size_t chars, double w, double h, int lines, double max_size, double min_size) {
    const double fs = std::min({max_size, (w - 2) / (0.6 * static_cast<double>(std::max<std::size_t>(chars, 1))),
                                (h - 2) / (1.25 * lines)});
    return fs >= min_size ? fs : 0;
}

}  // namespace

std::string html_escape(const std::string& text) {
    std::string out;
    out.reserve(text.size());
    for (char c : text) {
        switch (c) {
            case '&': out += "&amp;"; break;
            case '<': out += "&lt;"; break;
            case '>': out += "&gt;"; break;
            case '"': out += "&quot;"; break;
            case '\'': out += "&#39;"; break;
            default: out += c;
        }
    }
    return out;
}

// ColorBrewer hexadecimal values (Brewer, www.ColorBrewer.org, from memory; the ctest "report: colour scales
// as RColorBrewer" compares them with R's RColorBrewer::brewer.pal when that package is installed).
const std::vector<ColourClass>& sequential_scale() {
    static const std::vector<ColourClass> s = make_scale(
        {"#FFFFD9", "#EDF8B1", "#C7E9B4", "#7FCDBB", "#41B6C4", "#1D91C0", "#225EA8", "#253494", "#081D58"});
    return s;
}

const std::vector<ColourClass>& diverging_scale() {
    static const std::vector<ColourClass> s = make_scale({"#67001F", "#B2182B", "#D6604D", "#F4A582", "#FDDBC7",
                                                          "#F7F7F7", "#D1E5F0", "#92C5DE", "#4393C3", "#2166AC",
                                                          "#053061"});
    return s;
}

int sequential_class(double v, double lo, double hi, int classes) {
    if (!(hi > lo)) return classes / 2;
    return clamped_int(std::floor((v - lo) / (hi - lo) * classes), 0, classes - 1, classes / 2);
}

const std::vector<double>& residual_class_bounds() {
    static const std::vector<double> b = {-3, -2, -1.5, -1, -0.5, 0.5, 1, 1.5, 2, 3};
    return b;
}

int residual_class(double z) {
    // Lower classes are closed at their upper end on the negative side and the other way round on the
    // positive side, so ±0.5 fall in the middle class and ±3 are not yet beyond 3.
    int c = 0;
    for (double b : residual_class_bounds()) c += (b < 0 && z >= b) || (b > 0 && z > b);
    return c;
}

// ---- axes -----------------------------------------------------------------------------------------------

double LinearAxis::to_px(double v) const { return px0 + (v - min) / (max - min) * (px1 - px0); }

std::vector<double> LinearAxis::ticks() const {
    std::vector<double> t;
    const double n = std::round((max - min) / step);
    if (!std::isfinite(n) || n < 0) return t;
    for (int i = 0; i <= static_cast<int>(std::min(n, 1000.0)); ++i) t.push_back(min + step * i);
    return t;
}

LinearAxis nice_axis(double lo, double hi, double px0, double px1, int target) {
    if (!std::isfinite(lo) || !std::isfinite(hi)) lo = 0, hi = 1;  // nothing finite to show: a plain 0..1 axis
    if (!(hi > lo)) {
        const double pad = lo != 0 ? std::fabs(lo) * 0.1 : 1;
        lo -= pad;
        hi += pad;
    }
    const double raw = (hi - lo) / std::max(target, 1);
    const double mag = std::pow(10.0, std::floor(std::log10(raw)));
    double step = 10 * mag;
    for (double k : {1.0, 2.0, 5.0, 10.0}) {
        if (k * mag >= raw * (1 - 1e-12)) {
            step = k * mag;
            break;
        }
    }
    LinearAxis a;
    a.step = step;
    a.min = std::floor(lo / step + 1e-9) * step;
    a.max = std::ceil(hi / step - 1e-9) * step;
    if (a.max <= a.min) a.max = a.min + step;
    a.px0 = px0;
    a.px1 = px1;
    return a;
}

namespace {
// Tick text with as many decimals as the step needs.
std::string tick_text(double v, double step) {
    const int decimals = clamped_int(std::ceil(-std::log10(step) - 1e-9), 0, 12, 0);
    if (std::fabs(v) < step * 1e-9) v = 0;
    return fmt::format("{:.{}f}", v, decimals);
}
}  // namespace

// ---- means ----------------------------------------------------------------------------------------------

MeansChart means_chart(const MeansTable& table, double t_critical, const std::string& unit,
                       const std::map<std::string, std::string>& relabel) {
    MeansChart c;
    c.unit = unit;
    std::size_t longest = 4;
    double lo = 0, hi = 0;
    bool any = false;
    for (const MeanRow& r : table.rows) {
        MeanPoint p;
        auto it = relabel.find(r.label);
        p.label = it == relabel.end() ? r.label : it->second;
        p.letters = r.hsd_group;
        if (r.mean) {
            p.mean = *r.mean;
            const double hw = r.se ? t_critical * *r.se : 0;
            p.lower = *r.mean - hw;
            p.upper = *r.mean + hw;
            lo = any ? std::min(lo, p.lower) : p.lower;
            hi = any ? std::max(hi, p.upper) : p.upper;
            any = true;
        }
        longest = std::max(longest, std::min<std::size_t>(p.label.size(), 34));
        c.points.push_back(std::move(p));
    }
    if (!any) lo = 0, hi = 1;
    c.label_width = std::clamp(7.0 * static_cast<double>(longest) + 12, 80.0, 250.0);
    c.axis = nice_axis(lo, hi, c.label_width + 14, c.width - 64);
    c.height = 16 + c.row_height * static_cast<double>(c.points.size()) + 52;
    c.caption = fmt::format("Means with 95 % intervals (mean ± t·s.e., t = {:.4f} on {} df); letters: Tukey's HSD "
                            "at 5 %, means sharing a letter do not differ",
                            t_critical, table.error_df);
    return c;
}

std::string means_chart_svg(const MeansChart& c) {
    std::string o = fmt::format(
        "<svg class=\"chart means\" viewBox=\"0 0 {} {}\" role=\"img\" xmlns=\"http://www.w3.org/2000/svg\">"
        "<title>{}</title>\n",
        px(c.width), px(c.height), esc(c.caption));
    const double top = 16;
    const double axis_y = top + c.row_height * static_cast<double>(c.points.size()) + 6;
    // Grid lines at the ticks, under everything else.
    for (double t : c.axis.ticks())
        o += fmt::format("<line class=\"grid\" x1=\"{0}\" x2=\"{0}\" y1=\"{1}\" y2=\"{2}\"/>", px(c.axis.to_px(t)),
                         px(top - 4), px(axis_y));
    o += "\n";
    for (std::size_t i = 0; i < c.points.size(); ++i) {
        const MeanPoint& p = c.points[i];
        const double y = top + c.row_height * (static_cast<double>(i) + 0.5);
        const std::string shown = p.label.size() > 34 ? p.label.substr(0, 33) + "\xe2\x80\xa6" : p.label;
        if (i % 2 == 0)
            o += fmt::format("<rect class=\"band\" x=\"0\" y=\"{}\" width=\"{}\" height=\"{}\"/>",
                             px(y - c.row_height / 2), px(c.width), px(c.row_height));
        o += fmt::format("<g class=\"mean\" data-label=\"{}\"", esc(p.label));
        if (p.mean)
            o += fmt::format(" data-mean=\"{}\" data-lower=\"{}\" data-upper=\"{}\"", full(*p.mean), full(p.lower),
                             full(p.upper));
        o += fmt::format("><title>{}</title><text class=\"label\" x=\"{}\" y=\"{}\">{}</text>", esc(p.label),
                         px(c.label_width), px(y + 4), esc(shown));
        if (p.mean) {
            const double xl = c.axis.to_px(p.lower), xu = c.axis.to_px(p.upper), xm = c.axis.to_px(*p.mean);
            o += fmt::format("<line class=\"whisker\" x1=\"{0}\" x2=\"{1}\" y1=\"{2}\" y2=\"{2}\"/>"
                             "<line class=\"whisker\" x1=\"{0}\" x2=\"{0}\" y1=\"{3}\" y2=\"{4}\"/>"
                             "<line class=\"whisker\" x1=\"{1}\" x2=\"{1}\" y1=\"{3}\" y2=\"{4}\"/>"
                             "<circle class=\"dot\" cx=\"{5}\" cy=\"{2}\" r=\"4.5\"/>",
                             px(xl), px(xu), px(y), px(y - 5), px(y + 5), px(xm));
        } else {
            o += fmt::format("<text class=\"ne\" x=\"{}\" y=\"{}\">not estimable</text>", px(c.axis.px0 + 4),
                             px(y + 4));
        }
        o += fmt::format("<text class=\"letters\" x=\"{}\" y=\"{}\">{}</text></g>\n", px(c.axis.px1 + 14), px(y + 4),
                         esc(p.letters));
    }
    o += fmt::format("<line class=\"axis\" x1=\"{0}\" x2=\"{1}\" y1=\"{2}\" y2=\"{2}\"/>", px(c.axis.px0),
                     px(c.axis.px1), px(axis_y));
    for (double t : c.axis.ticks()) {
        const double x = c.axis.to_px(t);
        o += fmt::format("<line class=\"tickmark\" x1=\"{0}\" x2=\"{0}\" y1=\"{1}\" y2=\"{2}\"/>"
                         "<text class=\"tick\" data-value=\"{3}\" x=\"{0}\" y=\"{4}\">{5}</text>",
                         px(x), px(axis_y), px(axis_y + 5), full(t), px(axis_y + 18), tick_text(t, c.axis.step));
    }
    o += fmt::format("<text class=\"axis-title\" x=\"{}\" y=\"{}\">mean{}</text>",
                     px((c.axis.px0 + c.axis.px1) / 2), px(axis_y + 38), c.unit.empty() ? "" : " (" + esc(c.unit) + ")");
    o += fmt::format("<text class=\"letters-title\" x=\"{}\" y=\"{}\">HSD</text>", px(c.axis.px1 + 14), px(top - 4));
    o += "</svg>\n";
    return o;
}

// ---- field map ------------------------------------------------------------------------------------------

std::string field_map_svg(const MapModel& m, const MapColouring& col) {
    const double x0 = 0, y0 = m.trial.y - 20;
    const double x1 = m.trial.x + m.trial.w + 70, y1 = m.scale.start.y + 24;
    const std::string hatch = col.id + "-hatch";
    std::string o = fmt::format(
        "<svg class=\"map\" viewBox=\"{} {} {} {}\" role=\"img\" xmlns=\"http://www.w3.org/2000/svg\">"
        "<title>{}</title>\n"
        "<defs><pattern id=\"{}\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\" "
        "patternTransform=\"rotate(45)\"><rect width=\"6\" height=\"6\" fill=\"#ffffff\"/>"
        "<line x1=\"0\" y1=\"0\" x2=\"0\" y2=\"6\" stroke=\"#555555\" stroke-width=\"1.5\"/></pattern></defs>\n",
        px(x0), px(y0), px(x1 - x0), px(y1 - y0), esc(col.caption), esc(hatch));
    for (const PageRect& g : m.guards) {
        o += fmt::format("<g class=\"guard\"><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>", px(g.x), px(g.y),
                         px(g.w), px(g.h));
        const double fs = fit_font(1, g.w, g.h, 1, 9, 3);
        if (fs > 0)
            o += fmt::format("<text x=\"{}\" y=\"{}\" font-size=\"{}\">G</text>", px(g.x + g.w / 2),
                             px(g.y + g.h / 2 + fs * 0.35), px(fs));
        o += "</g>\n";
    }
    const auto& scale = col.scale == MapScale::Sequential ? sequential_scale() : diverging_scale();
    for (const MapPlot& p : m.plots) {
        auto it = col.cells.find(p.id);
        const MapCell cell = it == col.cells.end() ? MapCell{} : it->second;
        const PageRect& r = p.rect;
        std::string fill = "url(#" + esc(hatch) + ")";
        bool light = false;
        if (cell.value) {
            const int k = col.scale == MapScale::Sequential
                              ? sequential_class(*cell.value, col.lo, col.hi, static_cast<int>(scale.size()))
                              : residual_class(*cell.value);
            fill = scale[static_cast<std::size_t>(k)].hex;
            light = scale[static_cast<std::size_t>(k)].light_text;
        }
        const bool undefined = !cell.value && !cell.text.empty();  // observed, nothing to colour
        o += fmt::format("<g class=\"plot{}{}\" data-plot=\"{}\"",
                         cell.value ? "" : undefined ? " undefined" : " missing",
                         cell.outlier ? " outlier" : "", p.id);
        if (cell.value) o += fmt::format(" data-value=\"{}\"", full(*cell.value));
        o += fmt::format("><title>{}</title><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"/>",
                         esc(cell.title.empty() ? "plot " + p.label : cell.title), px(r.x), px(r.y), px(r.w),
                         px(r.h), fill);
        if (cell.flagged)
            o += fmt::format("<rect class=\"flagged\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>", px(r.x + 3),
                             px(r.y + 3), px(std::max(r.w - 6, 1.0)), px(std::max(r.h - 6, 1.0)));
        if (cell.outlier)
            o += fmt::format("<rect class=\"outline\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>", px(r.x + 1.5),
                             px(r.y + 1.5), px(std::max(r.w - 3, 1.0)), px(std::max(r.h - 3, 1.0)));
        // The plot id above the value when both fit, else the value alone, else nothing (the title keeps both).
        const std::string value = cell.value ? cell.text + (cell.outlier ? "!" : "") : undefined ? cell.text : "missing";
        const std::size_t chars = std::max(value.size(), p.label.size());
        const char* ink = light ? "light" : "dark";
        const double cx = r.x + r.w / 2, cy = r.y + r.h / 2;
        if (double fs = fit_font(chars, r.w, r.h, 2, 11, 4); fs > 0) {
            o += fmt::format("<text class=\"id {}\" x=\"{}\" y=\"{}\" font-size=\"{}\">{}</text>", ink, px(cx),
                             px(cy - fs * 0.25), px(fs * 0.8), esc(p.label));
            o += fmt::format("<text class=\"v {}\" x=\"{}\" y=\"{}\" font-size=\"{}\">{}</text>", ink, px(cx),
                             px(cy + fs * 1.0), px(fs), esc(value));
        } else if (double fs1 = fit_font(value.size(), r.w, r.h, 1, 11, 4); fs1 > 0) {
            o += fmt::format("<text class=\"v {}\" x=\"{}\" y=\"{}\" font-size=\"{}\">{}</text>", ink, px(cx),
                             px(cy + fs1 * 0.35), px(fs1), esc(value));
        }
        o += "</g>\n";
    }
    for (const MapBlock& b : m.blocks) {
        for (const PageRect& r : b.outline)
            o += fmt::format("<rect class=\"block\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>", px(r.x), px(r.y),
                             px(r.w), px(r.h));
        o += fmt::format("<text class=\"block-label\" x=\"{}\" y=\"{}\">{}</text>\n", px(b.label_at.x),
                         px(b.label_at.y), esc(b.label));
    }
    // North arrow beside the trial, the scale bar under it (geometry of core/field/map_model.hpp).
    const double ax = m.trial.x + m.trial.w + 35, ay = m.trial.y + 40, len = 40;
    const double tx = ax + m.north.dx * len / 2, ty = ay + m.north.dy * len / 2;
    const double bx = ax - m.north.dx * len / 2, by = ay - m.north.dy * len / 2;
    const double nx = -m.north.dy, ny = m.north.dx;  // normal, for the arrow head
    o += fmt::format("<g class=\"north\"><line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\"/>"
                     "<polygon points=\"{},{} {},{} {},{}\"/><text x=\"{}\" y=\"{}\">N</text></g>\n",
                     px(bx), px(by), px(tx), px(ty), px(tx + m.north.dx * 6), px(ty + m.north.dy * 6),
                     px(tx - m.north.dx * 6 + nx * 6), px(ty - m.north.dy * 6 + ny * 6),
                     px(tx - m.north.dx * 6 - nx * 6), px(ty - m.north.dy * 6 - ny * 6), px(tx + m.north.dx * 16),
                     px(ty + m.north.dy * 16 + 4));
    const MapScaleBar& sb = m.scale;
    o += "<g class=\"scalebar\">";
    for (int s = 0; s < sb.segments; ++s) {
        const double w = sb.length_pt / sb.segments;
        o += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"5\" fill=\"{}\"/>", px(sb.start.x + s * w),
                         px(sb.start.y - 5), px(w), s % 2 == 0 ? "#000000" : "#ffffff");
    }
    o += fmt::format("<text x=\"{}\" y=\"{}\">{}</text></g>\n", px(sb.start.x + sb.length_pt + 6),
                     px(sb.start.y), esc(sb.label));
    o += "</svg>\n";
    return o;
}

std::string map_legend_svg(const MapColouring& col) {
    const bool seq = col.scale == MapScale::Sequential;
    const auto& scale = seq ? sequential_scale() : diverging_scale();
    const double sw = seq ? 46 : 40, left = 14, top = 6;
    const double width = left + sw * static_cast<double>(scale.size()) + 170;
    std::string o = fmt::format(
        "<svg class=\"legend\" viewBox=\"0 0 {} 66\" role=\"img\" xmlns=\"http://www.w3.org/2000/svg\">"
        "<title>{}</title>\n",
        px(width), seq ? "colour scale: ColorBrewer YlGnBu, 9 equal classes" : "colour scale: ColorBrewer RdBu, 11 classes");
    for (std::size_t k = 0; k < scale.size(); ++k)
        o += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"16\" fill=\"{}\"/>",
                         px(left + sw * static_cast<double>(k)), px(top), px(sw), scale[k].hex);
    o += fmt::format("<rect class=\"frame\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"16\"/>", px(left), px(top),
                     px(sw * static_cast<double>(scale.size())));
    if (seq) {
        const int n = static_cast<int>(scale.size());
        const double step = (col.hi - col.lo) / n;
        const int decimals = step > 0 ? clamped_int(std::ceil(-std::log10(step)) + 1, 0, 6, 2) : 2;
        for (int k = 0; k <= n; k += (n > 6 ? 2 : 1)) {
            const double v = col.lo + step * k;
            o += fmt::format("<text class=\"tick\" x=\"{}\" y=\"{}\">{:.{}f}</text>", px(left + sw * k), px(top + 32),
                             v, decimals);
        }
        o += fmt::format("<text class=\"note\" x=\"{}\" y=\"{}\">{}</text>", px(left), px(top + 52),
                         col.unit.empty() ? std::string("value") : "value (" + esc(col.unit) + ")");
    } else {
        const auto& b = residual_class_bounds();
        for (std::size_t k = 0; k < b.size(); ++k)
            o += fmt::format("<text class=\"tick\" x=\"{}\" y=\"{}\">{:g}</text>",
                             px(left + sw * static_cast<double>(k + 1)), px(top + 32), b[k]);
        o += fmt::format("<text class=\"note\" x=\"{}\" y=\"{}\">standardized residual; beyond ±3 outlined and "
                         "marked !</text>",
                         px(left), px(top + 52));
    }
    const double kx = left + sw * static_cast<double>(scale.size()) + 16;
    o += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"22\" height=\"16\" fill=\"#ffffff\" stroke=\"#333333\"/>"
                     "<rect x=\"{}\" y=\"{}\" width=\"16\" height=\"10\" class=\"flagged\"/>"
                     "<text class=\"note\" x=\"{}\" y=\"{}\">flagged, value kept</text>",
                     px(kx), px(top), px(kx + 3), px(top + 3), px(kx + 28), px(top + 12));
    const bool undefined = std::any_of(col.cells.begin(), col.cells.end(),
                                       [](const auto& c) { return !c.second.value && !c.second.text.empty(); });
    o += fmt::format("<text class=\"note\" x=\"{}\" y=\"{}\">hatched: missing</text>", px(kx), px(top + 32));
    if (undefined)
        o += fmt::format("<text class=\"note\" x=\"{}\" y=\"{}\">h=1: leverage 1, undefined</text>", px(kx), px(top + 50));
    o += "</svg>\n";
    return o;
}

// ---- residuals against time -----------------------------------------------------------------------------

std::optional<double> utc_seconds(const std::string& iso) {
    int y = 0, mo = 0, d = 0, h = 0, mi = 0, s = 0;
    char z = 0;
    if (iso.size() != 20 || std::sscanf(iso.c_str(), "%4d-%2d-%2dT%2d:%2d:%2d%c", &y, &mo, &d, &h, &mi, &s, &z) != 7 ||
        z != 'Z' || mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 60)
        return std::nullopt;
    // Days from 1970-01-01 of a proleptic Gregorian date: H. Hinnant, "chrono-Compatible Low-Level Date
    // Algorithms", days_from_civil.
    const int yy = y - (mo <= 2);
    const int era = (yy >= 0 ? yy : yy - 399) / 400;
    const unsigned yoe = static_cast<unsigned>(yy - era * 400);
    const unsigned doy = (153 * static_cast<unsigned>(mo + (mo > 2 ? -3 : 9)) + 2) / 5 + static_cast<unsigned>(d) - 1;
    const unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    const long days = static_cast<long>(era) * 146097 + static_cast<long>(doe) - 719468;
    return static_cast<double>(days) * 86400.0 + h * 3600.0 + mi * 60.0 + s;
}

namespace {

std::string shape(int k, double x, double y) {
    switch (k % 6) {
        case 0: return fmt::format("<circle cx=\"{}\" cy=\"{}\" r=\"3.5\"/>", px(x), px(y));
        case 1: return fmt::format("<rect x=\"{}\" y=\"{}\" width=\"7\" height=\"7\"/>", px(x - 3.5), px(y - 3.5));
        case 2:
            return fmt::format("<polygon points=\"{},{} {},{} {},{}\"/>", px(x), px(y - 4.5), px(x + 4.2), px(y + 3),
                               px(x - 4.2), px(y + 3));
        case 3:
            return fmt::format("<polygon points=\"{},{} {},{} {},{} {},{}\"/>", px(x), px(y - 4.5), px(x + 4.5), px(y),
                               px(x), px(y + 4.5), px(x - 4.5), px(y));
        case 4:
            return fmt::format("<path class=\"stroke\" d=\"M{} {}L{} {}M{} {}L{} {}\"/>", px(x - 4), px(y - 4),
                               px(x + 4), px(y + 4), px(x - 4), px(y + 4), px(x + 4), px(y - 4));
        default:
            return fmt::format("<path class=\"stroke\" d=\"M{} {}L{} {}M{} {}L{} {}\"/>", px(x - 4.5), px(y), px(x + 4.5),
                               px(y), px(x), px(y - 4.5), px(x), px(y + 4.5));
    }
}

std::string clock_text(double seconds, bool with_date) {
    const long s = static_cast<long>(std::floor(seconds));
    const long day = s >= 0 ? s / 86400 : (s - 86399) / 86400;
    const long rem = s - day * 86400;
    if (!with_date) return fmt::format("{:02}:{:02}", rem / 3600, rem % 3600 / 60);
    // civil_from_days (Hinnant, as above), for the month and day.
    const long z = day + 719468;
    const long era = (z >= 0 ? z : z - 146096) / 146097;
    const long doe = z - era * 146097;
    const long yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
    const long doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    const long mp = (5 * doy + 2) / 153;
    const long d = doy - (153 * mp + 2) / 5 + 1;
    const long m = mp < 10 ? mp + 3 : mp - 9;
    return fmt::format("{:02}-{:02} {:02}:{:02}", m, d, rem / 3600, rem % 3600 / 60);
}

}  // namespace

std::string time_residual_svg(const std::vector<TimePoint>& points) {
    const double width = 640, left = 46, right = 624, top = 12, plot_h = 180;
    double t0 = 0, t1 = 1, zmax = 3.5;
    std::vector<std::string> observers;
    for (std::size_t i = 0; i < points.size(); ++i) {
        t0 = i == 0 ? points[i].seconds : std::min(t0, points[i].seconds);
        t1 = i == 0 ? points[i].seconds : std::max(t1, points[i].seconds);
        zmax = std::max(zmax, std::ceil(std::fabs(points[i].z)) + 0.5);
        if (std::find(observers.begin(), observers.end(), points[i].observer) == observers.end())
            observers.push_back(points[i].observer);
    }
    // Time ticks at a round number of minutes, hours or days.
    const double span = std::max(t1 - t0, 60.0);
    static const std::array<double, 14> steps = {60,    120,   300,   600,    900,    1800,   3600,
                                                 7200,  10800, 21600, 43200,  86400,  172800, 604800};
    double step = steps.back();
    for (double s : steps) {
        if (span / s <= 6) {
            step = s;
            break;
        }
    }
    LinearAxis tx;
    tx.step = step;
    tx.min = std::floor(t0 / step) * step;
    tx.max = std::max(std::ceil(t1 / step) * step, tx.min + step);
    tx.px0 = left;
    tx.px1 = right;
    const bool dates = tx.max - tx.min >= 86400;
    auto ypx = [&](double z) { return top + (zmax - z) / (2 * zmax) * plot_h; };
    const double legend_rows = std::ceil(static_cast<double>(observers.size()) / 2);
    const double height = top + plot_h + 44 + 16 * legend_rows;
    std::string o = fmt::format(
        "<svg class=\"chart time\" viewBox=\"0 0 {} {}\" role=\"img\" xmlns=\"http://www.w3.org/2000/svg\">"
        "<title>standardized residual against recording time</title>\n",
        px(width), px(height));
    o += fmt::format("<rect class=\"frame\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>", px(left), px(top),
                     px(right - left), px(plot_h));
    o += fmt::format("<line class=\"zero\" x1=\"{0}\" x2=\"{1}\" y1=\"{2}\" y2=\"{2}\"/>", px(left), px(right),
                     px(ypx(0)));
    for (double z : {-3.0, 3.0})
        o += fmt::format("<line class=\"limit\" x1=\"{0}\" x2=\"{1}\" y1=\"{2}\" y2=\"{2}\"/>"
                         "<text class=\"tick\" x=\"{3}\" y=\"{4}\">{5:+g}</text>",
                         px(left), px(right), px(ypx(z)), px(left - 6), px(ypx(z) + 4), z);
    o += fmt::format("<text class=\"tick\" x=\"{}\" y=\"{}\">0</text>", px(left - 6), px(ypx(0) + 4));
    for (double t : tx.ticks())
        o += fmt::format("<line class=\"tickmark\" x1=\"{0}\" x2=\"{0}\" y1=\"{1}\" y2=\"{2}\"/>"
                         "<text class=\"tick time\" x=\"{0}\" y=\"{3}\">{4}</text>",
                         px(tx.to_px(t)), px(top + plot_h), px(top + plot_h + 5), px(top + plot_h + 17),
                         clock_text(t, dates));
    o += fmt::format("<text class=\"axis-title\" x=\"{}\" y=\"{}\">recorded (UTC)</text>", px((left + right) / 2),
                     px(top + plot_h + 32));
    o += "\n";
    for (const TimePoint& p : points) {
        const int k = static_cast<int>(std::find(observers.begin(), observers.end(), p.observer) - observers.begin());
        const double x = tx.to_px(p.seconds), y = ypx(p.z);
        o += fmt::format("<g class=\"point\" data-plot=\"{}\" data-z=\"{}\"><title>plot {}: {:+.2f}</title>{}",
                         esc(p.plot), full(p.z), esc(p.plot), p.z, shape(k, x, y));
        if (std::fabs(p.z) > 3)
            o += fmt::format("<text class=\"flag\" x=\"{}\" y=\"{}\">{}</text>", px(x + 6), px(y - 4), esc(p.plot));
        o += "</g>\n";
    }
    for (std::size_t k = 0; k < observers.size(); ++k) {
        const double x = left + (k % 2) * 300, y = top + plot_h + 48 + 16 * static_cast<double>(k / 2);
        o += fmt::format("<g class=\"key\">{}<text x=\"{}\" y=\"{}\">{}</text></g>", shape(static_cast<int>(k), x + 4, y - 4),
                         px(x + 14), px(y), esc(observers[k]));
    }
    o += "</svg>\n";
    return o;
}

}  // namespace pw::report
