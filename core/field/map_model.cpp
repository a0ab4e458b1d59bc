// The field map's geometry (see map_model.hpp for the frames, the palette and the invariants).
#include "core/field/map_model.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include "core/error.hpp"

namespace pw {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;
constexpr double kMarginLeft = 80;   // room for "Block 12"
constexpr double kMarginTop = 78;    // title and two subtitle lines
constexpr double kMarginBottom = 78; // scale bar and its ratio
constexpr double kLegendGap = 40;
constexpr double kLegendWidth = 240;
constexpr std::size_t kLegendChars = 42;  // characters per legend line at 8.5 pt in a 240 pt column

// Hatchings given to treatments in turn; with the 7 palette colours (black is kept for lines) every pair is
// distinct for up to 42 treatments, and the key text tells them apart beyond that.
constexpr std::array<Hatch, 6> kTreatmentHatches = {Hatch::None,     Hatch::Forward, Hatch::Backward,
                                                    Hatch::Vertical, Hatch::Horizontal, Hatch::Grid};

std::vector<std::string> wrap(const std::string& text, std::size_t width) {
    std::vector<std::string> lines;
    std::string line;
    std::size_t start = 0;
    while (start <= text.size()) {
        std::size_t space = text.find(' ', start);
        if (space == std::string::npos) space = text.size();
        const std::string word = text.substr(start, space - start);
        if (!line.empty() && line.size() + 1 + word.size() > width) {
            lines.push_back(line);
            line.clear();
        }
        line += (line.empty() ? "" : " ") + word;
        start = space + 1;
    }
    if (!line.empty()) lines.push_back(line);
    return lines;
}

bool overlaps(const PageRect& a, const PageRect& b) {
    const double eps = 1e-6;
    return a.x + eps < b.x + b.w && b.x + eps < a.x + a.w && a.y + eps < b.y + b.h && b.y + eps < a.y + a.h;
}

PageRect bounding(const std::vector<PageRect>& rs) {
    double x0 = rs.front().x, y0 = rs.front().y, x1 = x0 + rs.front().w, y1 = y0 + rs.front().h;
    for (const PageRect& r : rs) {
        x0 = std::min(x0, r.x);
        y0 = std::min(y0, r.y);
        x1 = std::max(x1, r.x + r.w);
        y1 = std::max(y1, r.y + r.h);
    }
    return PageRect{x0, y0, x1 - x0, y1 - y0};
}

PageRect centred_rect(const MapModel& m, double cx, double cy, double wx, double wy) {
    const PagePoint c = field_to_page(m, cx, cy);
    return PageRect{c.x - wx * m.pt_per_m / 2, c.y - wy * m.pt_per_m / 2, wx * m.pt_per_m, wy * m.pt_per_m};
}

void add_text(std::vector<LegendEntry>& legend, const std::string& text) {
    for (const std::string& line : wrap(text, kLegendChars)) {
        LegendEntry e;
        e.kind = LegendEntry::Kind::Text;
        e.text = line;
        legend.push_back(e);
    }
}

void add_entry(std::vector<LegendEntry>& legend, LegendEntry::Kind kind, const std::string& text, MapFill fill = {},
               const std::string& key = "") {
    const std::vector<std::string> lines = wrap(text, kLegendChars - 8);
    LegendEntry e;
    e.kind = kind;
    e.fill = fill;
    e.key = key;
    e.text = lines.empty() ? "" : lines.front();
    legend.push_back(e);
    for (std::size_t i = 1; i < lines.size(); ++i) {
        LegendEntry more;
        more.kind = LegendEntry::Kind::Text;
        more.text = lines[i];
        more.continued = true;
        legend.push_back(more);
    }
}

std::string metres(double m) { return fmt::format("{:g} m", m); }

}  // namespace

const std::array<PaletteColour, 8>& okabe_ito_palette() {
    // Okabe & Ito (2008), "Color Universal Design", the eight colours with their sRGB values (from memory).
    static const std::array<PaletteColour, 8> p = {{
        {"black", "#000000", {0, 0, 0}},
        {"orange", "#E69F00", {230 / 255.0, 159 / 255.0, 0}},
        {"sky blue", "#56B4E9", {86 / 255.0, 180 / 255.0, 233 / 255.0}},
        {"bluish green", "#009E73", {0, 158 / 255.0, 115 / 255.0}},
        {"yellow", "#F0E442", {240 / 255.0, 228 / 255.0, 66 / 255.0}},
        {"blue", "#0072B2", {0, 114 / 255.0, 178 / 255.0}},
        {"vermillion", "#D55E00", {213 / 255.0, 94 / 255.0, 0}},
        {"reddish purple", "#CC79A7", {204 / 255.0, 121 / 255.0, 167 / 255.0}},
    }};
    return p;
}

PagePoint field_to_page(const MapModel& m, double x_m, double y_m) {
    return PagePoint{m.origin.x + x_m * m.pt_per_m, m.origin.y - y_m * m.pt_per_m};
}

PagePoint page_direction(double bearing_deg, double x_bearing_deg) {
    // r: the bearing measured clockwise from the field's +x axis. On the page x runs right and the field's
    // y (90° anticlockwise of x) runs up, so clockwise on the ground is clockwise on the page: the unit
    // vector is (cos r, sin r) with the page's y pointing down.
    const double r = (bearing_deg - x_bearing_deg) * kDeg;
    return PagePoint{std::cos(r), std::sin(r)};
}

double nice_length(double max_m) {
    if (!(max_m > 0)) return 0;
    double p = std::pow(10.0, std::floor(std::log10(max_m)));
    for (double k : {5.0, 2.0, 1.0})
        if (k * p <= max_m * (1 + 1e-12)) return k * p;
    return p / 2;
}

MapModel build_map_model(const TrialSpec& spec, const Layout& layout, const MapOptions& options) {
    if (options.treatments && spec.blind)
        throw InputError("trial.blind: the trial is blind; its map is drawn without treatments (leave out --treatments)");
    if (layout.plots.empty()) throw InputError("the layout has no plots to draw");
    MapModel m;
    const double fx = std::max(layout.field_x_m, 1e-3), fy = std::max(layout.field_y_m, 1e-3);
    m.pt_per_m = options.max_drawing_pt / std::max(fx, fy);
    m.trial = PageRect{kMarginLeft, kMarginTop, fx * m.pt_per_m, fy * m.pt_per_m};
    m.origin = PagePoint{m.trial.x, m.trial.y + m.trial.h};
    m.stake = m.origin;
    m.title = spec.title.empty() ? spec.code : spec.title;
    m.subtitle.push_back(fmt::format("Trial {}{}{} · {} · {} plots · seed {}", spec.code,
                                     spec.site.empty() ? "" : " · ", spec.site, spec.design, layout.plots.size(),
                                     layout.seed));
    m.subtitle.push_back(fmt::format("Field frame: x along the base line (bearing {:g}°) from the stake, y at right "
                                     "angles to its left; trial {:g} m × {:g} m",
                                     spec.field.x_bearing_deg, layout.field_x_m, layout.field_y_m));

    // Plots, with treatments when asked.
    double min_w = 1e9, min_h = 1e9;
    std::size_t longest = 1;
    for (const PlotPlacement& p : layout.plots) {
        MapPlot mp;
        mp.id = p.id;
        mp.block = p.block;
        mp.rect = centred_rect(m, p.x_m, p.y_m, p.width_x_m, p.width_y_m);
        if (p.harvest_x_m > 0 || p.harvest_y_m > 0)
            mp.harvest = centred_rect(m, p.x_m, p.y_m, p.harvest_x_m > 0 ? p.harvest_x_m : p.width_x_m,
                                      p.harvest_y_m > 0 ? p.harvest_y_m : p.width_y_m);
        mp.label = std::to_string(p.id);
        if (options.treatments) {
            mp.key = fmt::format("T{}", p.treatment + 1);
            mp.fill = MapFill{1 + p.treatment % 7, kTreatmentHatches[static_cast<std::size_t>(p.treatment) % 6]};
        }
        min_w = std::min(min_w, mp.rect.w);
        min_h = std::min(min_h, mp.rect.h);
        longest = std::max({longest, mp.label.size(), mp.key.size()});
        m.plots.push_back(std::move(mp));
    }
    // Text fits the smallest plot: about 0.62 em per digit, 1.25 em per line (DejaVu Sans, common practice).
    const double lines = options.treatments ? 2 : 1;
    m.plot_font_pt = std::clamp(std::min(min_w / (0.62 * static_cast<double>(longest) + 0.5), min_h / (1.25 * lines + 0.3)),
                                3.0, 9.0);
    for (const GuardPlot& g : layout.guards) m.guards.push_back(centred_rect(m, g.x_m, g.y_m, g.width_x_m, g.width_y_m));

    // Blocks: one box around the block's plots, or one per plot row when that box would take in other plots.
    std::map<int, std::vector<const MapPlot*>> by_block;
    for (const MapPlot& p : m.plots) by_block[p.block].push_back(&p);
    for (const auto& [block, plots] : by_block) {
        MapBlock b;
        b.block = block;
        b.label = fmt::format("Block {}", block);
        std::vector<PageRect> rects;
        for (const MapPlot* p : plots) rects.push_back(p->rect);
        const PageRect box = bounding(rects);
        bool takes_in_others = false;
        for (const MapPlot& q : m.plots)
            if (q.block != block && overlaps(box, q.rect)) takes_in_others = true;
        if (!takes_in_others) {
            b.outline.push_back(box);
        } else {
            std::map<double, std::vector<PageRect>> rows;  // by the plot's top edge
            for (const MapPlot* p : plots) rows[std::round(p->rect.y * 1000) / 1000].push_back(p->rect);
            for (const auto& [y, rs] : rows) b.outline.push_back(bounding(rs));
        }
        m.blocks.push_back(std::move(b));
    }
    // Block labels in the left margin when no other block shares the block's band of the page, else above it.
    for (MapBlock& b : m.blocks) {
        const PageRect box = bounding(b.outline);
        bool shared = false;
        for (const MapBlock& o : m.blocks) {
            if (o.block == b.block) continue;
            const PageRect ob = bounding(o.outline);
            if (ob.y + 1e-6 < box.y + box.h && box.y + 1e-6 < ob.y + ob.h) shared = true;
        }
        b.label_at = shared ? PagePoint{box.x + 2, box.y - 3} : PagePoint{8, box.y + box.h / 2 + 3.5};
    }

    // Legend column: north arrow, gradient arrow with its label, then the keys.
    m.legend_at = PagePoint{m.trial.x + m.trial.w + kLegendGap, kMarginTop};
    const PagePoint north = page_direction(0, spec.field.x_bearing_deg);
    m.north = MapArrow{{m.legend_at.x + 28, m.legend_at.y + 28}, north.x, north.y, 44, "N"};
    const PagePoint grad = page_direction(spec.gradient.bearing_deg, spec.field.x_bearing_deg);
    m.gradient = MapArrow{{m.legend_at.x + 28, m.legend_at.y + 100}, grad.x, grad.y, 50,
                          fmt::format("gradient increases (bearing {:g}°)", spec.gradient.bearing_deg)};
    m.gradient_text = wrap(spec.gradient.label, 30);

    std::vector<LegendEntry>& lg = m.legend;
    add_entry(lg, LegendEntry::Kind::Plot, "plot, with its id");
    bool harvest = std::any_of(m.plots.begin(), m.plots.end(), [](const MapPlot& p) { return p.harvest.w > 0; });
    if (harvest)
        add_entry(lg, LegendEntry::Kind::Harvest,
                  fmt::format("harvest (net) area, dashed: {} × {}",
                              metres(spec.field.harvest_length_m.value_or(spec.field.plot_length_m)),
                              metres(spec.field.harvest_width_m.value_or(spec.field.plot_width_m))));
    add_entry(lg, LegendEntry::Kind::Block, "block, outlined and named");
    if (!m.guards.empty()) add_entry(lg, LegendEntry::Kind::Guard, "guard plot (G): sown, never recorded");
    add_entry(lg, LegendEntry::Kind::Stake,
              spec.field.origin.description.empty() ? "reference stake (x = 0, y = 0)"
                                                    : "reference stake: " + spec.field.origin.description);
    add_text(lg, fmt::format("Plots {} (along the gradient) × {} (across); alleys {}; gaps {}.",
                             metres(spec.field.plot_length_m), metres(spec.field.plot_width_m),
                             metres(spec.field.alley_m), metres(spec.field.plot_gap_m)));
    if (options.treatments) {
        add_text(lg, "Treatments (key, colour and hatching):");
        for (std::size_t t = 0; t < spec.treatments.size(); ++t) {
            const TreatmentSpec& ts = spec.treatments[t];
            add_entry(lg, LegendEntry::Kind::Treatment, ts.label + (ts.check ? " (check)" : ""),
                      MapFill{1 + static_cast<int>(t % 7), kTreatmentHatches[t % 6]}, fmt::format("T{}", t + 1));
        }
        add_text(lg, "Colours: Okabe-Ito palette (colour-blind safe); keys and hatching carry the same information.");
    }
    const double legend_top = m.legend_at.y + 140 + 11.0 * static_cast<double>(m.gradient_text.size());
    m.legend_at.y = legend_top;

    // Scale bar under the field: about a third of its width, in a 1-2-5 length.
    const double bar_m = nice_length(std::max(fx / 3, 1e-3));
    const double lead = bar_m / std::pow(10.0, std::floor(std::log10(bar_m) + 1e-12));
    m.scale.metres = bar_m;
    m.scale.length_pt = bar_m * m.pt_per_m;
    m.scale.segments = std::abs(lead - 2) < 1e-9 ? 4 : 5;
    m.scale.start = PagePoint{m.trial.x, m.trial.y + m.trial.h + 40};
    m.scale.label = metres(bar_m);
    // 1 pt = 25.4 / 72 mm (PostScript point); the ratio holds for a print at 100 %.
    const double mm_per_m = m.pt_per_m * 25.4 / 72.0;
    const double ratio = 1000.0 / mm_per_m;
    const double mag = std::pow(10.0, std::floor(std::log10(ratio)) - 1);
    m.scale.ratio = fmt::format("about 1:{:g} when printed at 100 %", std::round(ratio / mag) * mag);

    m.width_pt = m.legend_at.x + kLegendWidth + 20;
    const double legend_bottom = m.legend_at.y + m.legend_line_pt * static_cast<double>(m.legend.size()) + 20;
    m.height_pt = std::max(m.trial.y + m.trial.h + kMarginBottom, legend_bottom);
    return m;
}

}  // namespace pw
