#pragma once
/// The one exception type of the vectors room: unreadable or malformed files, inconsistent
/// manifests, records that do not fit their format. what() names the file (and line) at fault.

#include <stdexcept>

namespace fxmimo::vectors {

struct vector_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

}  // namespace fxmimo::vectors
