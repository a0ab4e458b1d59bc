// Fuzz target: the RFC 4180 reader behind `analyze --csv` and every CSV import. Spreadsheets come from other
// machines and other programs, so any byte string must give a table or an InputError naming the line, never
// a crash or a sanitizer report. A table that parses must be rectangular (every record as wide as the header).
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>

#include "core/error.hpp"
#include "storage/csv_table.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    try {
        const pw::CsvTable table = pw::parse_csv(text, "fuzz.csv");
        for (const auto& row : table.rows)
            if (row.size() != table.header.size()) std::abort();
    } catch (const pw::Error&) {
    }
    return 0;
}
