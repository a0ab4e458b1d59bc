// `plotwright device`: provisioning handhelds from the station database (storage/sync.hpp, docs/station.md).
//   device add --db STATION --name NAME --out DEVICE.db   the handheld's own database, and the station's record
//   device list --db STATION                             the handhelds this station provisioned
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"

namespace pw::app {

void add_device_command(CLI::App& app) {
    struct Options {
        std::string db, name, out;
        bool json = false;
    };
    auto o = std::make_shared<Options>();
    auto* device = app.add_subcommand("device", "Provision handhelds from the station database and list them");
    device->require_subcommand(1);

    auto* add = device->add_subcommand(
        "add", "Write a handheld's own database (trial, plots, traits, its identity; neutral treatment codes on a blind trial)");
    add->add_option("--db", o->db, "Station database")->required()->check(CLI::ExistingFile);
    add->add_option("--name", o->name, "Device name, stored with everything it records")->required();
    add->add_option("--out", o->out, "Handheld database to create (must not exist)")->required();
    add->add_flag("--json", o->json, "Print the result as JSON");
    add->callback([o] {
        Store station = Store::open(o->db);
        const ProvisionResult r = provision_device(station, o->name, o->out, now_utc_iso());
        if (o->json) {
            std::cout << nlohmann::json{{"device", r.device}, {"file", r.file}, {"blind", r.blind}, {"plots", r.plots},
                                        {"traits", r.traits}, {"trial", station.trial().spec.code}}
                             .dump(2)
                      << "\n";
            return;
        }
        std::cout << fmt::format("provisioned device {} for trial {}: {} ({} plots, {} traits{})\n", r.device,
                                 station.trial().spec.code, r.file, r.plots, r.traits,
                                 r.blind ? "; blind: treatments as neutral codes" : "");
    });

    auto* list = device->add_subcommand("list", "List the handhelds this station provisioned");
    list->add_option("--db", o->db, "Station database")->required()->check(CLI::ExistingFile);
    list->add_flag("--json", o->json, "Print the list as JSON");
    list->callback([o] {
        Store station = Store::open(o->db);
        const auto devices = provisioned_devices(station);
        if (o->json) {
            nlohmann::json j = nlohmann::json::array();
            for (const auto& d : devices)
                j.push_back({{"device", d.name}, {"provisioned_utc", d.provisioned_utc}, {"blind", d.blind}, {"file", d.file}});
            std::cout << j.dump(2) << "\n";
            return;
        }
        if (devices.empty()) std::cout << "no devices provisioned yet (plotwright device add)\n";
        for (const auto& d : devices) std::cout << fmt::format("{}\t{}\t{}\n", d.name, d.provisioned_utc, d.file);
    });
}

}  // namespace pw::app
