// File, clock and entropy access for the executable: the only places that touch the OS directly.
#include <chrono>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <random>
#include <sstream>
#include <system_error>

#include <fmt/format.h>

#include "core/error.hpp"
#include "firmware_app/app.hpp"

#ifndef PW_LAYOUTS_DIR
#define PW_LAYOUTS_DIR "layouts"
#endif

namespace pw::app {

std::string read_text_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw Error(fmt::format("{}: cannot open for reading", path));
    std::ostringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw Error(fmt::format("{}: read failed", path));
    return ss.str();
}

void write_file(const std::string& path, const std::string& bytes) {
    namespace fs = std::filesystem;
    fs::path target(path);
    fs::path tmp = target;
    tmp += ".partial";
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        if (!out) throw Error(fmt::format("{}: cannot open for writing", tmp.string()));
        out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
        out.flush();
        if (!out) throw Error(fmt::format("{}: write failed (disk full?)", tmp.string()));
    }
    std::error_code ec;
    fs::rename(tmp, target, ec);
    if (ec) {
        fs::remove(tmp, ec);
        throw Error(fmt::format("{}: cannot move into place", path));
    }
}

void emit(const std::string& out, const std::string& text) {
    if (out.empty() || out == "-") {
        std::cout << text;
        std::cout.flush();
        if (!std::cout) throw Error("stdout: write failed");
    } else {
        write_file(out, text);
    }
}

std::string now_utc_iso() {
    std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
    std::tm tm{};
    gmtime_r(&t, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
    return buf;
}

std::uint64_t seed_from_os() {
    std::random_device rd;
    std::uint64_t hi = rd(), lo = rd();
    // Keep seeds within 0..2^63-1 so that a seed written back into a TOML spec (signed 64-bit) still parses.
    return ((hi << 32) | (lo & 0xffffffffu)) & 0x7fffffffffffffffULL;
}

std::string default_layouts_dir() { return PW_LAYOUTS_DIR; }

}  // namespace pw::app
