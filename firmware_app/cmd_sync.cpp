// `plotwright sync`: bundles between handhelds and the station (storage/sync.hpp; docs/sync.md, docs/station.md).
//   sync export --db DEVICE.db --out FILE                  what the handheld recorded since its last export
//   sync export --db STATION --for DEVICE --out FILE       plot states and added traits from the station, for
//                                                          one handheld
//   sync import --db DB FILE...                            each bundle in its own transaction
// Import goes on after a refused file and exits 1 at the end if any was refused; a gap in a device's
// sequence numbers is a note, not a failure.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <filesystem>
#include <iostream>

#include "core/error.hpp"
#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw::app {
namespace {

std::string seq_list(const std::vector<std::uint64_t>& seqs) {
    std::string s;
    for (auto q : seqs) s += (s.empty() ? "" : ", ") + std::to_string(q);
    return s;
}

}  // namespace

void add_sync_command(CLI::App& app) {
    struct Options {
        std::string db, out, for_device;
        std::vector<std::string> files;
        bool json = false;
    };
    auto o = std::make_shared<Options>();
    auto* sync = app.add_subcommand("sync", "Exchange bundles between handhelds and the station");
    sync->require_subcommand(1);

    auto* ex = sync->add_subcommand("export", "Write a bundle: a handheld's new records, or (--for) the station's plot "
                                              "states and added traits for one handheld");
    ex->add_option("--db", o->db, "Handheld database (or the station's, with --for)")->required()->check(CLI::ExistingFile);
    ex->add_option("--out", o->out, "Bundle file to write (must not exist)")->required();
    ex->add_option("--for", o->for_device, "At the station: the handheld the bundle is for");
    ex->add_flag("--json", o->json, "Print the result as JSON");
    ex->callback([o] {
        if (std::filesystem::exists(o->out))
            throw InputError(o->out + ": already exists; a bundle is never overwritten (it may not have been imported yet)");
        Store store = Store::open(o->db);
        const ExportResult r =
            export_bundle(store, o->for_device, now_utc_iso(), [&](const std::string& bytes) { write_file(o->out, bytes); });
        if (o->json) {
            std::cout << nlohmann::json{{"file", o->out}, {"maker", to_string(r.header.kind)}, {"device", r.header.device},
                                        {"seq", r.header.seq}, {"observations", r.observations}, {"events", r.events},
                                        {"traits", r.traits}, {"bytes", r.bytes.size()}}
                             .dump(2)
                      << "\n";
            return;
        }
        if (r.header.kind == BundleKind::FromDevice)
            std::cout << fmt::format("{}: bundle {} of device {}: {} observations, {} plot events ({} bytes)\n", o->out,
                                     r.header.seq, r.header.device, r.observations, r.events, r.bytes.size());
        else
            std::cout << fmt::format("{}: station bundle {} for device {}: {} plot events, {} added traits ({} bytes)\n",
                                     o->out, r.header.seq, r.header.device, r.events, r.traits, r.bytes.size());
    });

    auto* im = sync->add_subcommand("import", "Apply bundles, each in its own transaction; a refused one changes nothing");
    im->add_option("--db", o->db, "Station database (or a handheld's, for the station's bundle)")->required()->check(CLI::ExistingFile);
    im->add_option("files", o->files, "Bundle files")->required();
    im->add_flag("--json", o->json, "Print the results as JSON");
    im->callback([o] {
        Store store = Store::open(o->db);
        int refused = 0;
        nlohmann::json results = nlohmann::json::array();
        for (const std::string& file : o->files) {
            try {
                const std::string bytes = read_text_file(file);
                const ImportResult r = import_bundle(store, bytes, file, now_utc_iso());
                nlohmann::json j{{"file", file},
                                 {"ok", true},
                                 {"maker", to_string(r.header.kind)},
                                 {"device", r.header.device},
                                 {"seq", r.header.seq},
                                 {"already_imported", r.already_imported},
                                 {"observations", r.observations},
                                 {"events", r.events},
                                 {"traits", r.traits},
                                 {"duplicates", r.duplicates},
                                 {"pending", r.pending},
                                 {"missing_seqs", r.missing_seqs}};
                results.push_back(j);
                if (o->json) continue;
                const std::string which =
                    r.header.kind == BundleKind::FromDevice
                        ? fmt::format("bundle {} of {}", r.header.seq, r.header.device)
                        : fmt::format("station bundle {} for {}", r.header.seq, r.header.device);
                if (r.already_imported)
                    std::cout << fmt::format("{}: {} was imported before: nothing changed\n", file, which);
                else if (r.header.kind == BundleKind::FromDevice)
                    std::cout << fmt::format("{}: {}: {} new observations, {} new plot events, {} already held\n", file,
                                             which, r.observations, r.events, r.duplicates);
                else
                    std::cout << fmt::format("{}: {}: {} new plot events, {} new traits, {} already held\n", file, which,
                                             r.events, r.traits, r.duplicates);
                if (r.pending > 0)
                    std::cerr << fmt::format("note: {} received corrections wait for the observations they correct "
                                             "(an earlier bundle not yet imported)\n",
                                             r.pending);
                if (!r.missing_seqs.empty())
                    std::cerr << fmt::format("note: bundles {} of {} have not been imported yet (a gap in the sequence)\n",
                                             seq_list(r.missing_seqs), r.header.device);
            } catch (const Error& e) {
                ++refused;
                results.push_back({{"file", file}, {"ok", false}, {"message", e.what()}});
                std::cerr << "plotwright: sync import: " << e.what() << "\n";
            }
        }
        const std::size_t unresolved = count_unresolved_conflicts(store);
        if (o->json)
            std::cout << nlohmann::json{{"bundles", results}, {"unresolved_conflicts", unresolved}}.dump(2) << "\n";
        else
            std::cout << fmt::format("{}: {} unresolved conflict(s){}\n", o->db, unresolved,
                                     unresolved ? " (plotwright conflicts lists them)" : "");
        if (refused > 0) throw ExitStatus{1};
    });
}

}  // namespace pw::app
