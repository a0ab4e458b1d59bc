// The audit log of a trial database (table audit_log, migration 5; docs/station.md): every provisioning,
// bundle export and import, conflict resolution and correction, appended in the transaction that does
// it, each entry hash-chained to the one before (core/sync/audit_chain.hpp).
#pragma once
#include <string>
#include <vector>

#include "core/sync/audit_chain.hpp"

struct sqlite3;

namespace pw {

class Store;

// Storage-internal: appends one entry inside the caller's write transaction. `detail` is a JSON object
// text (nlohmann's dump(), keys sorted), stored exactly as given.
void append_audit(sqlite3* db, const std::string& recorded_utc, const std::string& action, const std::string& detail);

// Every entry, oldest first.
std::vector<AuditEntry> audit_entries(const Store& store);

// verify_audit_chain over audit_entries.
AuditCheck check_audit_log(const Store& store);

}  // namespace pw
