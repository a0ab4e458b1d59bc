// Shared plumbing of the plotwright executable: each command file registers one subcommand.
// Commands parse their options, call core and storage, and print; they hold no domain logic.
//
// Conventions: data goes to stdout or --out; messages and errors go to stderr; an error exits non-zero
// (1 for a refused input or failed operation, 2 for a misused command line).
#pragma once
#include <cstdint>
#include <functional>
#include <iosfwd>
#include <string>
#include <vector>

#include "core/record/session.hpp"

namespace CLI {
class App;
}

namespace pw::app {

void add_design_commands(CLI::App& app);   // design, plots
void add_tags_command(CLI::App& app);
void add_record_command(CLI::App& app);
void add_export_command(CLI::App& app);
void add_analyze_command(CLI::App& app);
void add_demo_command(CLI::App& app);
void add_plan_command(CLI::App& app);     // plan: replicates needed, power (core/stats/power.hpp)
void add_verify_command(CLI::App& app);   // verify: the randomization certificate (docs/certificate.md)
void add_map_command(CLI::App& app);      // map: the field drawn to scale (docs/agronomist.md)
void add_stakeout_command(CLI::App& app); // stakeout: plot corners by tape and GNSS (docs/agronomist.md)
void add_device_command(CLI::App& app);    // device add|list: provisioning handhelds (docs/station.md)
void add_sync_command(CLI::App& app);      // sync export|import: bundles between handhelds and station (docs/sync.md)
void add_conflicts_command(CLI::App& app); // conflicts: values that disagree after sync (docs/station.md)
void add_resolve_command(CLI::App& app);   // resolve: settle one conflict with a value and a reason
void add_audit_command(CLI::App& app);     // audit: verify the audit log's hash chain
void add_trait_command(CLI::App& app);     // trait add|list: traits added to a running trial (docs/station.md)
void add_report_command(CLI::App& app);   // report: the trial report, one HTML file (docs/report.md)

}  // namespace pw::app
namespace pw {
class Store;
}
namespace pw::app {

// Writes one SVG and/or PNG per plot plus an SVG sheet of all tags into `dir` (created if absent), in walking
// order. Returns the paths written.
struct TagOptions {
    std::string dir;
    std::string format = "both";     // svg | png | both
    std::string ecc = "Q";
    int module_px = 8;
};
std::vector<std::string> write_tags(const pw::Store& store, const TagOptions& o);

// The line recorder: reads lines (scans, typed codes, values, /commands) from `in` until end of input or
// /quit, feeding them to a RecordingSession over `store`. Messages go to `out`, refusals to `err`; prompts
// are written to `out` only when `prompts` is set (an interactive terminal). Returns the number of lines
// refused.
struct RecorderSetup {
    std::string device;
    std::string observer;
    std::function<std::string()> clock;
    bool prompts = false;
    bool echo = false;      // write each input line to `out` as "> line" (for the demo's field-day log)
};
int run_line_recorder(pw::Store& store, std::istream& in, std::ostream& out, std::ostream& err,
                      const RecorderSetup& setup);

// The analysis of one trait of a trial database, as `plotwright analyze --db` prints it (text or JSON).
std::string analyze_trait(const pw::Store& store, const std::string& trait, bool json);

// Thrown by a command that has already said what went wrong and only needs to set the exit status.
struct ExitStatus {
    int code = 1;
};

// A recording session over the store, knowing which plots already hold values or flags.
pw::RecordingSession open_session(pw::Store& store, const RecorderSetup& setup);
// The full-screen recorder on the terminal (ncurses). Returns the number of refused inputs.
int run_screen_recorder(pw::Store& store, const RecorderSetup& setup);

// File access, wrapped so every failure names the file.
std::string read_text_file(const std::string& path);
// Writes atomically (temporary file + rename), so a power cut never leaves half a file under the name.
void write_file(const std::string& path, const std::string& bytes);
// `out` empty or "-": stdout; otherwise write_file.
void emit(const std::string& out, const std::string& text);

std::string now_utc_iso();            // the clock, ISO 8601 UTC to the second
std::uint64_t seed_from_os();         // a fresh seed when the spec gives none (std::random_device)

// The source tree's layouts/ folder, for the demo's default spec.
std::string default_layouts_dir();

}  // namespace pw::app
