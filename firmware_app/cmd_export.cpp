// `plotwright export`: the current observations, one per row, for spreadsheets and other tools (csv); or the
// plots as GeoJSON polygons with their latest observations, for GIS tools (geojson, storage/export_geojson.hpp).
#include <CLI/CLI.hpp>

#include "firmware_app/app.hpp"
#include "storage/export_geojson.hpp"
#include "storage/store.hpp"

namespace pw::app {

void add_export_command(CLI::App& app) {
    struct Options {
        std::string db;
        std::string format = "csv";
        std::string out;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("export", "Export the current observations (CSV, RFC 4180, one per row) or the plots (GeoJSON, RFC 7946)");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--format", o->format, "csv (observations) or geojson (plots with their latest observations)")
        ->check(CLI::IsMember({"csv", "geojson"}));
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        emit(o->out, o->format == "geojson" ? export_plots_geojson(store) : export_observations_csv(store));
    });
}

}  // namespace pw::app
