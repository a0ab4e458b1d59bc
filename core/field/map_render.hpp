// The field map painted with cairo into memory: one drawing routine for SVG, PDF and PNG (cairo's surfaces
// written through cairo_*_surface_create_for_stream). Only paints a MapModel (core/field/map_model.hpp);
// what goes where is decided there. No file is written here. Linked as pw_map (cairo).
#pragma once
#include <cstdint>
#include <string>
#include <vector>

#include "core/field/map_model.hpp"

namespace pw {

enum class MapFormat { Svg, Pdf, Png };

// "svg", "pdf", "png" (any case); throws InputError otherwise.
MapFormat map_format_from_name(const std::string& name);

// The map's bytes. PNG at `png_dpi` (72 points per inch). SVG: cairo draws text as outlines, so a layer of
// invisible <text> elements with the plot ids (and a <title>) is added for searching and screen readers.
// Throws Error when cairo fails.
std::vector<std::uint8_t> render_map(const MapModel& model, MapFormat format, double png_dpi = 144);

}  // namespace pw
