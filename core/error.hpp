// Typed errors shared by every layer. Each carries a message written for the person at the keyboard:
// it names the file, line or field at fault and what was expected.
#pragma once
#include <stdexcept>
#include <string>

namespace pw {

// Base of every error plotwright raises on purpose; anything else escaping main is a bug.
struct Error : std::runtime_error {
    using std::runtime_error::runtime_error;
};

// A trial specification that cannot be used. `where` is "FILE:LINE" (or "FILE" when no line is known),
// `key` the dotted TOML key at fault ("traits[2].min"), `what()` the full sentence.
struct SpecError : Error {
    SpecError(std::string where_, std::string key_, const std::string& message)
        : Error(where_ + (key_.empty() ? "" : ": " + key_) + ": " + message),
          where(std::move(where_)), key(std::move(key_)) {}
    std::string where;
    std::string key;
};

// A spec that parses but cannot be laid out (zero blocks, duplicate labels, does not fit the field).
struct DesignError : Error {
    using Error::Error;
};

// A value or code typed or scanned by a person that is refused (the message says why).
struct InputError : Error {
    using Error::Error;
};

// The store refused or failed (wrong schema, not a plotwright database, disk full).
struct StoreError : Error {
    using Error::Error;
};

}  // namespace pw
