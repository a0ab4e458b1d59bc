// `plotwright export`: the current observations, one per row, for spreadsheets and other tools (csv); or the
// plots as GeoJSON polygons with their resolved values, for GIS tools (geojson, storage/export_geojson.hpp);
// or the resolved values for analysis elsewhere: csv-long, csv-wide, json (storage/export_tables.hpp). The
// observation exports leave plot/traits in conflict out and say how many on stderr (docs/station.md).
#include <CLI/CLI.hpp>

#include "firmware_app/app.hpp"
#include <fmt/format.h>

#include <iostream>

#include "storage/export_geojson.hpp"
#include "storage/export_tables.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

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
    cmd->add_option("--format", o->format,
                    "csv (observations), geojson (plots with their resolved values), or the resolved values: "
                    "csv-long (one per row), csv-wide (one plot per row), json")
        ->check(CLI::IsMember({"csv", "geojson", "csv-long", "csv-wide", "json"}));
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        TableExport t;
        if (o->format == "geojson" || o->format == "csv") {
            t.text = o->format == "geojson" ? export_plots_geojson(store) : export_observations_csv(store);
            t.unresolved = count_unresolved_conflicts(store);  // the SQL view: no second read of every value
        } else {
            t = o->format == "csv-long" ? export_long_csv(store)
                : o->format == "csv-wide" ? export_wide_csv(store)
                                          : export_json(store);
        }
        emit(o->out, t.text);
        if (t.unresolved > 0)
            std::cerr << fmt::format("note: {} plot/trait(s) in conflict left out of the export (plotwright conflicts "
                                     "lists them, plotwright resolve settles them)\n",
                                     t.unresolved);
    });
}

}  // namespace pw::app
