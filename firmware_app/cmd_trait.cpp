// `plotwright trait`: traits added to a running trial at the station (storage/station_traits.hpp,
// docs/station.md "Adding a trait").
//   trait add --db STATION --file NEWTRAIT.toml    the file's [[traits]] tables, read like the spec's
//   trait list --db DB                             the trial's traits, the added ones marked
// The spec text stays as given; added traits reach the handhelds in their station bundles (`sync export
// --for`). Refused on a handheld's database: only the station adds traits.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "firmware_app/app.hpp"
#include "storage/station_traits.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"

namespace pw::app {
namespace {

std::string with_unit(const TraitSpec& t) { return t.unit.empty() ? t.name : t.name + " [" + t.unit + "]"; }

}  // namespace

void add_trait_command(CLI::App& app) {
    struct Options {
        std::string db, file, observer = "station manager";
        bool json = false;
    };
    auto o = std::make_shared<Options>();
    auto* trait = app.add_subcommand("trait", "Add traits to a running trial at the station, and list the trial's traits");
    trait->require_subcommand(1);

    auto* add = trait->add_subcommand(
        "add", "Add the [[traits]] tables of a TOML file (the spec's trait format) to the station's trial; the spec "
               "text and everything recorded stay as they are, and handhelds get the traits in their next station "
               "bundle (sync export --for DEVICE)");
    add->add_option("--db", o->db, "Station database")->required()->check(CLI::ExistingFile);
    add->add_option("--file", o->file, "TOML file of one or more [[traits]] tables, nothing else")
        ->required()
        ->check(CLI::ExistingFile);
    add->add_option("--observer", o->observer, "Who adds the traits, kept with them (default: station manager)");
    add->add_flag("--json", o->json, "Print the traits added as JSON");
    add->callback([o] {
        const std::string text = read_text_file(o->file);
        Store store = Store::open(o->db);
        const std::vector<AddedTrait> added = add_traits(store, text, o->file, o->observer, now_utc_iso());
        if (o->json) {
            nlohmann::json j = nlohmann::json::array();
            for (const AddedTrait& a : added)
                j.push_back({{"name", a.trait.name}, {"label", a.trait.label}, {"unit", a.trait.unit},
                             {"kind", to_string(a.trait.kind)}, {"position", a.position}, {"added_utc", a.added_utc},
                             {"added_by", a.added_by}});
            std::cout << nlohmann::json{{"trial", store.trial().spec.code}, {"added", j},
                                        {"traits", store.trial().spec.traits.size()}}
                             .dump(2)
                      << "\n";
            return;
        }
        for (const AddedTrait& a : added)
            std::cout << fmt::format("trial {}: added trait {} ({}, \"{}\")\n", store.trial().spec.code,
                                     with_unit(a.trait), to_string(a.trait.kind), a.trait.label);
        std::cout << fmt::format("{} traits now; handhelds get the new ones with their next station bundle "
                                 "(plotwright sync export --db {} --for DEVICE --out FILE)\n",
                                 store.trial().spec.traits.size(), o->db);
    });

    auto* list = trait->add_subcommand("list", "List the trial's traits in recording order, the added ones with who and when");
    list->add_option("--db", o->db, "Trial database (the station's or a handheld's)")->required()->check(CLI::ExistingFile);
    list->add_flag("--json", o->json, "Print the list as JSON");
    list->callback([o] {
        Store store = Store::open(o->db);
        const std::vector<AddedTrait> added = added_traits(store);
        auto addition = [&](const std::string& name) -> const AddedTrait* {
            for (const AddedTrait& a : added)
                if (a.trait.name == name) return &a;
            return nullptr;
        };
        nlohmann::json j = nlohmann::json::array();
        for (const TraitSpec& t : store.trial().spec.traits) {
            const AddedTrait* a = addition(t.name);
            nlohmann::json row{{"name", t.name}, {"label", t.label}, {"unit", t.unit}, {"kind", to_string(t.kind)},
                               {"added", a != nullptr}};
            if (a) row.update({{"added_utc", a->added_utc}, {"added_by", a->added_by}});
            j.push_back(row);
            if (!o->json)
                std::cout << fmt::format("{}\t{}\t{}{}\n", with_unit(t), to_string(t.kind), t.label,
                                         a ? fmt::format("\tadded {} by {}", a->added_utc, a->added_by) : "");
        }
        if (o->json) std::cout << nlohmann::json{{"trial", store.trial().spec.code}, {"traits", j}}.dump(2) << "\n";
    });
}

}  // namespace pw::app
