// Painting the field map with cairo (see map_render.hpp). Lines and text are black; fills are light tints
// of the Okabe-Ito colours (map_model.hpp) under black hatching, so text stays legible on every fill and a
// grey-scale print keeps the hatching and the labels.
#include "core/field/map_render.hpp"

#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <cairo.h>
#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <memory>
#include <numbers>

#include "core/error.hpp"

namespace pw {
namespace {

constexpr const char* kFont = "DejaVu Sans";

cairo_status_t append_bytes(void* closure, const unsigned char* data, unsigned int length) {
    auto* out = static_cast<std::vector<std::uint8_t>*>(closure);
    out->insert(out->end(), data, data + length);
    return CAIRO_STATUS_SUCCESS;
}

void set_font(cairo_t* cr, double size, bool bold = false) {
    cairo_select_font_face(cr, kFont, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, size);
}

void text_at(cairo_t* cr, double x, double y, const std::string& s) {
    cairo_move_to(cr, x, y);
    cairo_show_text(cr, s.c_str());
    cairo_new_path(cr);  // show_text leaves a current point: a later arc would start with a line from it
}

double text_width(cairo_t* cr, const std::string& s) {
    cairo_text_extents_t e;
    cairo_text_extents(cr, s.c_str(), &e);
    return e.x_advance;
}

void centred_text(cairo_t* cr, double cx, double baseline, const std::string& s) {
    text_at(cr, cx - text_width(cr, s) / 2, baseline, s);
}

// Text with a white box behind it, so it reads over hatching.
void boxed_centred_text(cairo_t* cr, double cx, double baseline, const std::string& s, double size) {
    const double w = text_width(cr, s);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_rectangle(cr, cx - w / 2 - 1, baseline - size * 0.85, w + 2, size * 1.1);
    cairo_fill(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    centred_text(cr, cx, baseline, s);
}

void rect_path(cairo_t* cr, const PageRect& r) { cairo_rectangle(cr, r.x, r.y, r.w, r.h); }

void hatch(cairo_t* cr, const PageRect& r, Hatch h, double spacing) {
    if (h == Hatch::None) return;
    cairo_save(cr);
    rect_path(cr, r);
    cairo_clip(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 0.4);
    const double span = r.w + r.h;
    auto lines = [&](double dx0, double dy0, double dx1, double dy1, double step_x, double step_y, int n) {
        for (int i = -n; i <= n; ++i) {
            cairo_move_to(cr, dx0 + i * step_x, dy0 + i * step_y);
            cairo_line_to(cr, dx1 + i * step_x, dy1 + i * step_y);
        }
    };
    const int n = static_cast<int>(span / spacing) + 2;
    const double cx = r.x + r.w / 2, cy = r.y + r.h / 2;
    if (h == Hatch::Forward || h == Hatch::Cross) lines(cx - span, cy + span, cx + span, cy - span, spacing, spacing, n);
    if (h == Hatch::Backward || h == Hatch::Cross) lines(cx - span, cy - span, cx + span, cy + span, spacing, -spacing, n);
    if (h == Hatch::Horizontal || h == Hatch::Grid) lines(cx - span, cy, cx + span, cy, 0, spacing, n);
    if (h == Hatch::Vertical || h == Hatch::Grid) lines(cx, cy - span, cx, cy + span, spacing, 0, n);
    cairo_stroke(cr);
    cairo_restore(cr);
}

// A light tint of a palette colour (alpha 0.45 over white), or white.
void fill_rect(cairo_t* cr, const PageRect& r, const MapFill& f, double hatch_spacing) {
    cairo_set_source_rgb(cr, 1, 1, 1);
    rect_path(cr, r);
    cairo_fill(cr);
    if (f.colour >= 0) {
        const Rgb c = okabe_ito_palette()[static_cast<std::size_t>(f.colour)].rgb;
        cairo_set_source_rgba(cr, c.r, c.g, c.b, 0.45);
        rect_path(cr, r);
        cairo_fill(cr);
    }
    hatch(cr, r, f.hatch, hatch_spacing);
}

void guard_fill(cairo_t* cr, const PageRect& r) {
    cairo_set_source_rgb(cr, 0.85, 0.85, 0.85);
    rect_path(cr, r);
    cairo_fill(cr);
    hatch(cr, r, Hatch::Cross, 5);
}

void stake_symbol(cairo_t* cr, PagePoint p, double radius) {
    cairo_new_path(cr);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_arc(cr, p.x, p.y, radius, 0, 2 * std::numbers::pi);
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1.2);
    cairo_stroke(cr);
    cairo_move_to(cr, p.x - radius, p.y);
    cairo_line_to(cr, p.x + radius, p.y);
    cairo_move_to(cr, p.x, p.y - radius);
    cairo_line_to(cr, p.x, p.y + radius);
    cairo_stroke(cr);
}

void arrow(cairo_t* cr, const MapArrow& a) {
    const double hx = a.centre.x + a.dx * a.length / 2, hy = a.centre.y + a.dy * a.length / 2;
    const double tx = a.centre.x - a.dx * a.length / 2, ty = a.centre.y - a.dy * a.length / 2;
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 2);
    cairo_move_to(cr, tx, ty);
    cairo_line_to(cr, hx - a.dx * 8, hy - a.dy * 8);
    cairo_stroke(cr);
    // Head: a filled triangle 10 pt long.
    const double px = -a.dy, py = a.dx;
    cairo_move_to(cr, hx, hy);
    cairo_line_to(cr, hx - a.dx * 11 + px * 5, hy - a.dy * 11 + py * 5);
    cairo_line_to(cr, hx - a.dx * 11 - px * 5, hy - a.dy * 11 - py * 5);
    cairo_close_path(cr);
    cairo_fill(cr);
}

void paint(cairo_t* cr, const MapModel& m) {
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_paint(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    set_font(cr, 14, true);
    text_at(cr, 20, 26, m.title);
    set_font(cr, 8.5);
    for (std::size_t i = 0; i < m.subtitle.size(); ++i) text_at(cr, 20, 42 + 12.0 * static_cast<double>(i), m.subtitle[i]);

    // Trial area, guard plots, plots.
    cairo_set_line_width(cr, 0.5);
    cairo_set_dash(cr, nullptr, 0, 0);
    for (const PageRect& g : m.guards) {
        guard_fill(cr, g);
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 0.6);
        rect_path(cr, g);
        cairo_stroke(cr);
        set_font(cr, std::min(m.plot_font_pt, 8.0));
        if (g.w > 3 * m.plot_font_pt && g.h > 1.5 * m.plot_font_pt)
            boxed_centred_text(cr, g.x + g.w / 2, g.y + g.h / 2 + m.plot_font_pt * 0.35, "G", m.plot_font_pt);
    }
    const double hatch_spacing = std::clamp(m.plot_font_pt * 0.7, 3.0, 6.0);
    for (const MapPlot& p : m.plots) {
        fill_rect(cr, p.rect, p.fill, hatch_spacing);
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 0.8);
        rect_path(cr, p.rect);
        cairo_stroke(cr);
        if (p.harvest.w > 0) {
            const double dash[] = {3, 2};
            cairo_set_dash(cr, dash, 2, 0);
            cairo_set_line_width(cr, 0.6);
            rect_path(cr, p.harvest);
            cairo_stroke(cr);
            cairo_set_dash(cr, nullptr, 0, 0);
        }
        const double cx = p.rect.x + p.rect.w / 2, cy = p.rect.y + p.rect.h / 2;
        set_font(cr, m.plot_font_pt, true);
        if (p.key.empty()) {
            boxed_centred_text(cr, cx, cy + m.plot_font_pt * 0.35, p.label, m.plot_font_pt);
        } else {
            boxed_centred_text(cr, cx, cy - m.plot_font_pt * 0.25, p.label, m.plot_font_pt);
            set_font(cr, m.plot_font_pt);
            boxed_centred_text(cr, cx, cy + m.plot_font_pt * 0.95, p.key, m.plot_font_pt);
        }
    }
    // Block outlines over the plots, then their names.
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 2.2);
    for (const MapBlock& b : m.blocks)
        for (const PageRect& r : b.outline) {
            rect_path(cr, r);
            cairo_stroke(cr);
        }
    set_font(cr, 10, true);
    for (const MapBlock& b : m.blocks) text_at(cr, b.label_at.x, b.label_at.y, b.label);
    // The trial area's edge, thin.
    cairo_set_line_width(cr, 0.5);
    const double dash[] = {1, 2};
    cairo_set_dash(cr, dash, 2, 0);
    rect_path(cr, m.trial);
    cairo_stroke(cr);
    cairo_set_dash(cr, nullptr, 0, 0);

    // The stake and its label.
    stake_symbol(cr, m.stake, 5);
    set_font(cr, 9, true);
    text_at(cr, m.stake.x + 7, m.stake.y + 14, "stake (0, 0)");

    // Scale bar: alternating black and white parts.
    const MapScaleBar& s = m.scale;
    const double seg = s.length_pt / s.segments;
    cairo_set_line_width(cr, 0.8);
    for (int i = 0; i < s.segments; ++i) {
        cairo_rectangle(cr, s.start.x + i * seg, s.start.y - 5, seg, 5);
        if (i % 2 == 0) {
            cairo_fill_preserve(cr);
        }
        cairo_stroke(cr);
    }
    set_font(cr, 8.5);
    text_at(cr, s.start.x - 3, s.start.y + 11, "0");
    text_at(cr, s.start.x + s.length_pt - 6, s.start.y + 11, s.label);
    text_at(cr, s.start.x, s.start.y + 24, "scale " + s.ratio);

    // Legend: north arrow in a circle, gradient arrow with its label, then the keys.
    cairo_set_line_width(cr, 0.8);
    cairo_new_path(cr);
    cairo_arc(cr, m.north.centre.x, m.north.centre.y, m.north.length / 2 + 4, 0, 2 * std::numbers::pi);
    cairo_stroke(cr);
    arrow(cr, m.north);
    set_font(cr, 11, true);
    const double nx = m.north.centre.x + m.north.dx * (m.north.length / 2 + 12);
    const double ny = m.north.centre.y + m.north.dy * (m.north.length / 2 + 12);
    centred_text(cr, nx, ny + 4, m.north.label);
    set_font(cr, 8.5);
    text_at(cr, m.north.centre.x + 46, m.north.centre.y + 3, "north");
    arrow(cr, m.gradient);
    set_font(cr, 8.5, true);
    text_at(cr, m.gradient.centre.x + 46, m.gradient.centre.y - 10, m.gradient.label);
    set_font(cr, 8.5);
    for (std::size_t i = 0; i < m.gradient_text.size(); ++i)
        text_at(cr, m.gradient.centre.x + 46, m.gradient.centre.y + 3 + 11.0 * static_cast<double>(i), m.gradient_text[i]);

    double y = m.legend_at.y;
    for (const LegendEntry& e : m.legend) {
        const PageRect sw{m.legend_at.x, y - 9, 24, 12};
        set_font(cr, 8.5);
        cairo_set_source_rgb(cr, 0, 0, 0);
        double tx = m.legend_at.x + 32;
        switch (e.kind) {
            case LegendEntry::Kind::Plot:
            case LegendEntry::Kind::Treatment:
                fill_rect(cr, sw, e.fill, 3.5);
                cairo_set_source_rgb(cr, 0, 0, 0);
                cairo_set_line_width(cr, 0.8);
                rect_path(cr, sw);
                cairo_stroke(cr);
                if (!e.key.empty()) {
                    set_font(cr, 8, true);
                    boxed_centred_text(cr, sw.x + sw.w / 2, y, e.key, 8);
                    set_font(cr, 8.5);
                }
                break;
            case LegendEntry::Kind::Harvest: {
                const double d[] = {3, 2};
                cairo_set_dash(cr, d, 2, 0);
                cairo_set_line_width(cr, 0.6);
                rect_path(cr, PageRect{sw.x + 4, sw.y + 2, sw.w - 8, sw.h - 4});
                cairo_stroke(cr);
                cairo_set_dash(cr, nullptr, 0, 0);
                break;
            }
            case LegendEntry::Kind::Block:
                cairo_set_line_width(cr, 2.2);
                rect_path(cr, sw);
                cairo_stroke(cr);
                break;
            case LegendEntry::Kind::Guard:
                guard_fill(cr, sw);
                cairo_set_source_rgb(cr, 0, 0, 0);
                cairo_set_line_width(cr, 0.6);
                rect_path(cr, sw);
                cairo_stroke(cr);
                break;
            case LegendEntry::Kind::Stake:
                stake_symbol(cr, PagePoint{sw.x + sw.w / 2, sw.y + sw.h / 2}, 5);
                break;
            case LegendEntry::Kind::Text:
                if (!e.continued) tx = m.legend_at.x;
                break;
        }
        cairo_set_source_rgb(cr, 0, 0, 0);
        text_at(cr, tx, y, e.text);
        y += m.legend_line_pt;
    }
}

std::string xml_escape(const std::string& s) {
    std::string out;
    for (char c : s) {
        switch (c) {
            case '&': out += "&amp;"; break;
            case '<': out += "&lt;"; break;
            case '>': out += "&gt;"; break;
            case '"': out += "&quot;"; break;
            default: out += c;
        }
    }
    return out;
}

// The searchable text layer of the SVG: the title and one invisible <text> per plot at its centre.
std::string svg_text_layer(const MapModel& m) {
    std::string s = "<title>" + xml_escape(m.title) + "</title>\n<g id=\"plot-ids\" fill-opacity=\"0\" font-size=\"" +
                    fmt::format("{:g}", m.plot_font_pt) + "\" text-anchor=\"middle\">\n";
    for (const MapPlot& p : m.plots)
        s += fmt::format("<text x=\"{:.2f}\" y=\"{:.2f}\">{}</text>\n", p.rect.x + p.rect.w / 2, p.rect.y + p.rect.h / 2,
                         xml_escape(p.label));
    return s + "</g>\n";
}

struct SurfaceDeleter {
    void operator()(cairo_surface_t* s) const { cairo_surface_destroy(s); }
};
struct ContextDeleter {
    void operator()(cairo_t* c) const { cairo_destroy(c); }
};

void check(cairo_status_t st, const char* what) {
    if (st != CAIRO_STATUS_SUCCESS) throw Error(fmt::format("map: {}: {}", what, cairo_status_to_string(st)));
}

}  // namespace

MapFormat map_format_from_name(const std::string& name) {
    std::string n;
    for (char c : name) n += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    if (n == "svg") return MapFormat::Svg;
    if (n == "pdf") return MapFormat::Pdf;
    if (n == "png") return MapFormat::Png;
    throw InputError("map format '" + name + "': expected svg, pdf or png");
}

std::vector<std::uint8_t> render_map(const MapModel& m, MapFormat format, double png_dpi) {
    std::vector<std::uint8_t> bytes;
    std::unique_ptr<cairo_surface_t, SurfaceDeleter> surface;
    const double scale = png_dpi / 72.0;
    switch (format) {
        case MapFormat::Svg:
            surface.reset(cairo_svg_surface_create_for_stream(append_bytes, &bytes, m.width_pt, m.height_pt));
            break;
        case MapFormat::Pdf:
            surface.reset(cairo_pdf_surface_create_for_stream(append_bytes, &bytes, m.width_pt, m.height_pt));
            cairo_pdf_surface_set_metadata(surface.get(), CAIRO_PDF_METADATA_TITLE, m.title.c_str());
            cairo_pdf_surface_set_metadata(surface.get(), CAIRO_PDF_METADATA_CREATOR, "plotwright");
            break;
        case MapFormat::Png:
            surface.reset(cairo_image_surface_create(CAIRO_FORMAT_RGB24, static_cast<int>(std::ceil(m.width_pt * scale)),
                                                     static_cast<int>(std::ceil(m.height_pt * scale))));
            break;
    }
    check(cairo_surface_status(surface.get()), "cannot create the surface");
    {
        std::unique_ptr<cairo_t, ContextDeleter> cr(cairo_create(surface.get()));
        if (format == MapFormat::Png) cairo_scale(cr.get(), scale, scale);
        paint(cr.get(), m);
        check(cairo_status(cr.get()), "drawing failed");
    }
    if (format == MapFormat::Png) {
        check(cairo_surface_write_to_png_stream(surface.get(), append_bytes, &bytes), "cannot write the PNG");
        return bytes;
    }
    cairo_surface_finish(surface.get());
    check(cairo_surface_status(surface.get()), "cannot finish the document");
    if (format == MapFormat::Svg) {
        std::string text(bytes.begin(), bytes.end());
        const std::size_t end = text.rfind("</svg>");
        if (end == std::string::npos) throw Error("map: cairo's SVG has no closing </svg>");
        text.insert(end, svg_text_layer(m));
        bytes.assign(text.begin(), text.end());
    }
    return bytes;
}

}  // namespace pw
