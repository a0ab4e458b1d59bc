// `plotwright record`: the line recorder. A keyboard-wedge scanner types the tag text and Enter, so scans
// and typed values arrive the same way, one line each; from a pipe the same lines can be scripted.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <unistd.h>

#include <iostream>
#include <set>

#include "core/record/session.hpp"
#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"

namespace pw::app {
RecordingSession open_session(Store& store, const RecorderSetup& setup) {
    const StoredTrial& trial = store.trial();
    std::set<int> done;  // plots that already hold a value or a flag
    for (const auto& row : store.current_observations()) done.insert(row.record.obs.plot);
    for (const auto& ev : store.plot_events()) done.insert(ev.plot);
    return RecordingSession(trial.spec, trial.layout, store, {setup.device, setup.observer}, setup.clock,
                            std::move(done));
}

int run_line_recorder(Store& store, std::istream& in, std::ostream& out, std::ostream& err,
                      const RecorderSetup& setup) {
    const StoredTrial& trial = store.trial();
    RecordingSession session = open_session(store, setup);
    out << fmt::format("trial {}: {} of {} plots have records{}\n", trial.spec.code, session.plots_done(),
                       session.plots_total(), trial.spec.blind ? " (blind: treatments hidden)" : "");
    int refused = 0;
    std::string line;
    while (!session.finished()) {
        if (setup.prompts) out << session.prompt() << "> " << std::flush;
        if (!std::getline(in, line)) break;
        if (setup.echo) out << "> " << line << "\n";
        for (const Message& m : session.handle(line)) {
            switch (m.severity) {
                case Severity::Info: out << m.text << "\n"; break;
                case Severity::Warning: out << "warning: " << m.text << "\n"; break;
                case Severity::Refused:
                    err << "refused: " << m.text << "\n";
                    ++refused;
                    break;
            }
        }
        out.flush();  // a confirmation is shown only after its value is committed, and shown at once
    }
    out << std::flush;
    return refused;
}

void add_record_command(CLI::App& app) {
    struct Options {
        std::string db;
        std::string device = "handheld";
        std::string observer;
        bool lines = false;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("record", "Record traits plot by plot: scan a tag or type its code, then "
                                             "answer each trait (lines from a terminal or a pipe)");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    auto* device = cmd->add_option("--device", o->device,
                                   "Name of this device, stored with every value (default: the name a handheld was "
                                   "provisioned with, else handheld)");
    cmd->add_option("--observer", o->observer, "Who records, stored with every value")->required();
    cmd->add_flag("--lines", o->lines, "Line mode even on a terminal (the full screen is the default there)");
    cmd->callback([o, device] {
        Store store = Store::open(o->db);
        // A provisioned handheld records under its own name unless told otherwise (docs/station.md).
        if (device->count() == 0)
            if (auto id = device_identity(store)) o->device = id->device;
        bool tty = isatty(STDIN_FILENO) != 0;
        RecorderSetup setup{o->device, o->observer, now_utc_iso, tty};
        if (tty && isatty(STDOUT_FILENO) && !o->lines) {
            run_screen_recorder(store, setup);
            return;
        }
        int refused = run_line_recorder(store, std::cin, std::cout, std::cerr, setup);
        // From a pipe, a refused line fails the run so that scripts notice; nothing refused was written.
        if (!tty && refused > 0) {
            std::cerr << fmt::format("plotwright: {} line(s) refused\n", refused);
            throw ExitStatus{1};
        }
    });
}

}  // namespace pw::app
