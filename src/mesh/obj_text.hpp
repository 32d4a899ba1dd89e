// Private to the mesh stage: the small text pieces of reading an OBJ file line by line.
#pragma once

#include <string>
#include <vector>

namespace hearthray::mesh {

// The line without leading and trailing blanks.
std::string trim(const std::string& s);
// Tokens separated by blanks and tabs.
std::vector<std::string> split_blanks(const std::string& s);
// Whole-token decimal number. strtod also accepts "nan", "inf" and overflows to inf; those are
// caught by the finiteness check of the caller.
bool parse_number(const std::string& token, double* out);
// Whole-token integer; false also when it is out of the range of long (strtol would clamp
// it to LONG_MIN, whose negation overflows).
bool parse_integer(const std::string& token, long* out);
// The position (from 0) of the first byte that does not belong to well-formed UTF-8, or
// npos. Overlong forms, surrogates and code points past U+10FFFF are not well-formed.
std::size_t first_non_utf8(const std::string& s);

}  // namespace hearthray::mesh
