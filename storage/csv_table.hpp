// RFC 4180 CSV in and out, through libcsv (a general-purpose RFC 4180 reader and writer).
// Reading is used for analysing legacy spreadsheets; writing for every CSV export.
#pragma once
#include <string>
#include <vector>

namespace pw {

struct CsvTable {
    std::vector<std::string> header;
    std::vector<std::vector<std::string>> rows;   // each the same length as header
    // Index of a named column; throws InputError naming `source` and listing the columns present, or naming
    // the fields when the header gives the name to more than one column.
    std::size_t column(const std::string& name, const std::string& source) const;
};

// Parses CSV text whose first record is a header. Throws InputError naming `source` and the line of a
// malformed record or a record with the wrong number of fields.
CsvTable parse_csv(const std::string& text, const std::string& source);

// One RFC 4180 record (fields quoted only when needed), terminated by CRLF.
std::string csv_record(const std::vector<std::string>& fields);

}  // namespace pw
