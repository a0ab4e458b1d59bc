// Exports for analysis elsewhere (`plotwright export --format csv-long|csv-wide|json`, docs/station.md):
// the resolved values (storage/sync_conflicts.hpp: one value per plot and trait; plot/traits still in
// conflict left out and counted).
//   csv-long  RFC 4180, one value per row: plot,block,treatment,trait,value,unit,recorded_utc,device,observer,
//             observation,origin,origin_id
//   csv-wide  RFC 4180, one plot per row in walking order: plot,block,row,col,treatment, the design's own
//             columns, then one column per trait in spec order headed "name [unit]" ("name" without a unit),
//             then one per yield of the spec (computed, storage/trait_values.hpp); an empty cell is no value
//             (or an unresolved conflict)
//   json      RFC 8259: {"format":"plotwright-observations/1","trial":{...},"traits":[...],"yields":[...],
//             "unresolved_conflicts":N,"conflicts":[{"plot","trait"}],"observations":[...]}
// CSV fields are quoted only when they need it, records end in CRLF (storage/csv_table.hpp).
#pragma once
#include <cstddef>
#include <string>

namespace pw {

class Store;

struct TableExport {
    std::string text;
    std::size_t unresolved = 0;   // plot/traits left out because they are in conflict
};

TableExport export_long_csv(const Store& store);
TableExport export_wide_csv(const Store& store);
TableExport export_json(const Store& store);

}  // namespace pw
