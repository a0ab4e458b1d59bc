// The full-screen recorder (ncurses): the handheld's face over the same RecordingSession as the line
// recorder. Input, state and drawing are apart: keys become lines or commands for the session through one
// key table; recorder_view composes the screen from state; draw() only paints it.
//
// Keys: typed characters and a scanner's text go to the typed line; Enter hands it to the session. The
// function keys in key_hints() run the commands; the same commands can be typed as /skip, /flag ... .
// The flag key (F3) shows the spec's flags; the next key, 1 to 9, chooses one and its note is asked.
#include <curses.h>
#include <fmt/format.h>

#include <algorithm>
#include <clocale>

#include "firmware_app/app.hpp"
#include "firmware_app/recorder_view.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

// Roles to attributes that read without colour (monochrome and sunlit screens).
attr_t attribute(Role r) {
    switch (r) {
        case Role::Status: return A_REVERSE;
        case Role::Heading: return A_BOLD;
        case Role::Warning: return A_BOLD | A_UNDERLINE;
        case Role::Refused: return A_REVERSE | A_BOLD;
        case Role::Prompt: return A_BOLD;
        case Role::Keys: return A_REVERSE;
        case Role::Normal: break;
    }
    return A_NORMAL;
}

void draw(const std::vector<ScreenLine>& screen) {
    erase();
    for (std::size_t i = 0; i < screen.size(); ++i) {
        attrset(attribute(screen[i].role));
        mvaddstr(static_cast<int>(i), 0, screen[i].text.c_str());
        if (screen[i].role == Role::Status || screen[i].role == Role::Keys) {
            for (int x = getcurx(stdscr); x < COLS; ++x) addch(' ');  // full-width bars
        }
    }
    attrset(A_NORMAL);
    refresh();
}

struct Recorder {
    RecordingSession& session;
    const TrialSpec& spec;
    ViewState view;
    std::string pending_flag;  // the flag's name while its note is asked
    int refused = 0;

    void submit(const std::string& line) {
        auto ms = session.handle(line);
        refused += static_cast<int>(std::count_if(ms.begin(), ms.end(),
                                                  [](const Message& m) { return m.severity == Severity::Refused; }));
        view.add(ms);
    }

    void enter() {
        std::string line = view.typed;
        view.typed.clear();
        if (!pending_flag.empty()) {
            std::string state = pending_flag;
            pending_flag.clear();
            view.asking.clear();
            if (line.empty()) {
                view.add({{Severity::Info, "flag cancelled"}});
                return;
            }
            submit("/flag " + state + " " + line);
            return;
        }
        submit(line);
    }

    // The flag key: the spec's flags are shown, and the next key chooses one (flag_key) or cancels.
    void choose_flag() {
        if (!session.open_plot()) {
            view.add({{Severity::Refused, "no plot is open; scan a tag first"}});
            return;
        }
        view.choosing_flag = true;
    }

    void flag_key(int ch) {
        view.choosing_flag = false;
        const FlagSpec* f = flag_for_key(spec, ch);
        if (!f) {
            view.add({{Severity::Info, "flag cancelled"}});
            return;
        }
        pending_flag = f->name;
        view.asking = fmt::format("plot {} {}: note? (empty cancels)", session.open_plot()->id, f->label);
    }

    // The key table: each function key runs one small action.
    bool key(int ch) {
        if (view.help) {  // any key leaves the help screen
            view.help = false;
            return true;
        }
        if (view.choosing_flag) {
            if (ch == KEY_RESIZE) return true;
            flag_key(ch);
            return true;
        }
        switch (ch) {
            case KEY_F(1): view.help = true; return true;
            case KEY_F(2): submit("/skip"); return true;
            case KEY_F(3): choose_flag(); return true;
            case KEY_F(4): submit("/undo"); return true;
            case KEY_F(5): submit("/fix"); return true;
            case KEY_F(6): submit("/missing"); return true;
            case KEY_F(10): submit("/quit"); return true;
            case '\n':
            case '\r':
            case KEY_ENTER: enter(); return true;
            case KEY_BACKSPACE:
            case 127:
            case 8:
                // Remove one whole UTF-8 character.
                while (!view.typed.empty() && (view.typed.back() & 0xC0) == 0x80) view.typed.pop_back();
                if (!view.typed.empty()) view.typed.pop_back();
                return true;
            case 21:  // Ctrl-U: clear the typed line
                view.typed.clear();
                return true;
            case KEY_RESIZE: return true;
            default:
                if (ch >= 32 && ch < 256 && ch != 127) {
                    view.typed.push_back(static_cast<char>(ch));
                    return true;
                }
                return false;
        }
    }
};

}  // namespace

int run_screen_recorder(Store& store, const RecorderSetup& setup) {
    const StoredTrial& trial = store.trial();
    RecordingSession session = open_session(store, setup);
    Recorder r{session, trial.spec, {}, {}, 0};
    r.view.device = setup.device;
    r.view.observer = setup.observer;

    std::setlocale(LC_ALL, "");
    initscr();
    cbreak();
    noecho();
    keypad(stdscr, TRUE);
    curs_set(0);
    while (!session.finished()) {
        draw(compose_screen(session, trial.spec, r.view, COLS, LINES));
        int ch = getch();
        if (ch == ERR) break;  // input closed
        r.key(ch);
    }
    endwin();
    return r.refused;
}

}  // namespace pw::app
