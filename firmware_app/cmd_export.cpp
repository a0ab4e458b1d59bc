// `plotwright export`: the current observations, one per row, for spreadsheets and other tools.
#include <CLI/CLI.hpp>

#include "firmware_app/app.hpp"
#include "storage/store.hpp"

namespace pw::app {

void add_export_command(CLI::App& app) {
    struct Options {
        std::string db;
        std::string format = "csv";
        std::string out;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("export", "Export the current observations (CSV, RFC 4180, one per row)");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--format", o->format, "csv")->check(CLI::IsMember({"csv"}));
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        emit(o->out, export_observations_csv(store));
    });
}

}  // namespace pw::app
