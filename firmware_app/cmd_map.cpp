// `plotwright map`: the field drawn to scale (core/field/map_model.hpp decides what goes where,
// core/field/map_render.hpp paints it with cairo) as SVG, PDF or PNG, chosen by --format or the file name.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include "core/error.hpp"
#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#ifdef PW_HAVE_MAP
#include "core/field/map_render.hpp"
#endif

namespace pw::app {
namespace {

struct MapCommandOptions {
    std::string db;
    std::string out;
    std::string format;
    bool treatments = false;
    double dpi = 144;
};

std::string extension_of(const std::string& path) {
    const std::size_t slash = path.find_last_of('/');
    const std::size_t dot = path.find_last_of('.');
    if (dot == std::string::npos || (slash != std::string::npos && dot < slash)) return "";
    return path.substr(dot + 1);
}

void run_map(const MapCommandOptions& o) {
#ifdef PW_HAVE_MAP
    const std::string name = o.format.empty() ? extension_of(o.out) : o.format;
    if (name.empty())
        throw InputError(fmt::format("--out {}: the file name has no .svg, .pdf or .png ending; give --format", o.out));
    const MapFormat format = map_format_from_name(name);
    Store store = Store::open(o.db);
    const StoredTrial& t = store.trial();
    MapOptions options;
    options.treatments = o.treatments;
    const MapModel model = build_map_model(t.spec, t.layout, options);
    const std::vector<std::uint8_t> bytes = render_map(model, format, o.dpi);
    write_file(o.out, std::string(bytes.begin(), bytes.end()));
#else
    (void)o;
    throw Error("map: this build of plotwright has no map drawing (built without cairo)");
#endif
}

}  // namespace

void add_map_command(CLI::App& app) {
    auto o = std::make_shared<MapCommandOptions>();
    auto* cmd = app.add_subcommand("map", "Draw the field map to scale (SVG, PDF or PNG)");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--out", o->out, "Map file: .svg, .pdf or .png")->required();
    cmd->add_option("--format", o->format, "svg, pdf or png (default: from the --out file name)")
        ->check(CLI::IsMember({"svg", "pdf", "png"}));
    cmd->add_flag("--treatments", o->treatments, "Show each plot's treatment (refused on a blind trial)");
    cmd->add_option("--dpi", o->dpi, "PNG resolution, dots per inch")->check(CLI::Range(36.0, 600.0));
    cmd->callback([o] { run_map(*o); });
}

}  // namespace pw::app
