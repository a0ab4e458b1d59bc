// The stake-out screen on the terminal (ncurses). Input, state and drawing are apart: one key table turns
// keys into actions on StakeoutState, stakeout_view composes the screen, draw() only paints it. NMEA lines
// come from a file descriptor polled without blocking, so the keys stay live while the receiver talks.
#include "firmware_app/stakeout_tui.hpp"

#include <curses.h>
#include <fcntl.h>
#include <fmt/format.h>
#include <poll.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <clocale>
#include <cstring>
#include <optional>

#include "core/error.hpp"

namespace pw::app {
namespace {

// Lines from a file or a character device, without blocking.
class LineSource {
public:
    explicit LineSource(const std::string& path) : fd_(::open(path.c_str(), O_RDONLY | O_NOCTTY | O_NONBLOCK)) {
        if (fd_ < 0) throw InputError(fmt::format("{}: cannot open the NMEA source: {}", path, std::strerror(errno)));
    }
    ~LineSource() { ::close(fd_); }
    LineSource(const LineSource&) = delete;
    LineSource& operator=(const LineSource&) = delete;

    bool ended() const { return eof_ && buf_.empty(); }

    std::optional<std::string> next() {
        for (;;) {
            const std::size_t nl = buf_.find('\n');
            if (nl != std::string::npos) {
                std::string line = buf_.substr(0, nl);
                buf_.erase(0, nl + 1);
                return line;
            }
            if (eof_) {
                if (buf_.empty()) return std::nullopt;
                std::string rest;
                rest.swap(buf_);
                return rest;  // a last line without its line end (a truncated sentence, refused as such)
            }
            pollfd p{fd_, POLLIN, 0};
            if (::poll(&p, 1, 0) <= 0) return std::nullopt;
            char chunk[512];
            const ssize_t n = ::read(fd_, chunk, sizeof chunk);
            if (n == 0) eof_ = true;
            else if (n < 0) return std::nullopt;  // EAGAIN: nothing yet
            else buf_.append(chunk, static_cast<std::size_t>(n));
            if (buf_.size() > 4096 && buf_.find('\n') == std::string::npos) buf_.clear();  // noise, no line end
        }
    }

private:
    int fd_;
    std::string buf_;
    bool eof_ = false;
};

void draw(const std::vector<StakeoutLine>& screen) {
    erase();
    for (std::size_t i = 0; i < screen.size(); ++i) {
        attrset(screen[i].bar ? A_REVERSE : screen[i].strong ? A_BOLD : A_NORMAL);
        mvaddstr(static_cast<int>(i), 0, screen[i].text.c_str());
        if (screen[i].bar)
            for (int x = getcurx(stdscr); x < COLS; ++x) addch(' ');
    }
    attrset(A_NORMAL);
    refresh();
}

enum class Action { None, Next, Previous, Quit };

// The key table: what each key does.
Action action_for(int key) {
    switch (key) {
        case 'n': case ' ': case '\n': case KEY_ENTER: case KEY_RIGHT: case KEY_DOWN: return Action::Next;
        case 'p': case KEY_BACKSPACE: case 127: case KEY_LEFT: case KEY_UP: return Action::Previous;
        case 'q': case 'Q': case 27: return Action::Quit;
        default: return Action::None;
    }
}

struct Curses {
    Curses() {
        std::setlocale(LC_ALL, "");
        initscr();
        cbreak();
        noecho();
        keypad(stdscr, TRUE);
        curs_set(0);
        timeout(100);
    }
    ~Curses() { endwin(); }
};

}  // namespace

void run_stakeout_screen(StakeoutState& state, const std::string& nmea_path, double rate) {
    LineSource source(nmea_path);
    Curses curses;
    using Clock = std::chrono::steady_clock;
    auto due = Clock::now();
    bool dirty = true;
    for (;;) {
        if (dirty) draw(compose_stakeout_screen(state, COLS, LINES));
        dirty = false;
        const int key = getch();
        if (key == KEY_RESIZE) dirty = true;
        switch (action_for(key)) {
            case Action::Quit: return;
            case Action::Next: state.next(); dirty = true; break;
            case Action::Previous: state.previous(); dirty = true; break;
            case Action::None: break;
        }
        // At most 50 lines a turn, so keys are read at least ten times a second.
        for (int i = 0; i < 50; ++i) {
            if (rate > 0 && Clock::now() < due) break;
            std::optional<std::string> line = source.next();
            if (!line) break;
            state.feed(*line);
            dirty = true;
            if (rate > 0) due = Clock::now() + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(1.0 / rate));
        }
        if (source.ended() && !state.source_ended) {
            state.source_ended = true;
            dirty = true;
        }
    }
}

}  // namespace pw::app
