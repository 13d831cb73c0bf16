#pragma once
// The bytes of a share as processes exchange it (processes.hpp): values copied as they lie in
// memory, so every double arrives with its exact bits. The processes of one job run one program
// on one architecture (the MPI program is started once for all of them), so no byte order or
// layout is translated; a share that is shorter than its reader expects is a logic error.

#include <cstring>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <vector>

namespace fxmimo::analysis::wire {

class writer {
 public:
  template <class T>
  void put(const T& value) {
    static_assert(std::is_trivially_copyable_v<T>);
    bytes_.append(reinterpret_cast<const char*>(&value), sizeof(T));
  }
  template <class T>
  void put_vector(const std::vector<T>& values) {
    static_assert(std::is_trivially_copyable_v<T>);
    put<std::uint64_t>(values.size());
    bytes_.append(reinterpret_cast<const char*>(values.data()), values.size() * sizeof(T));
  }
  [[nodiscard]] std::string take() { return std::move(bytes_); }

 private:
  std::string bytes_;
};

class reader {
 public:
  explicit reader(const std::string& bytes) : bytes_(bytes) {}
  template <class T>
  T get() {
    static_assert(std::is_trivially_copyable_v<T>);
    T value;
    std::memcpy(&value, take(sizeof(T)), sizeof(T));
    return value;
  }
  template <class T>
  std::vector<T> get_vector() {
    static_assert(std::is_trivially_copyable_v<T>);
    const auto n = get<std::uint64_t>();
    if (n > (bytes_.size() - at_) / sizeof(T)) throw std::logic_error("a share ends inside a vector");
    std::vector<T> values(n);
    if (n > 0) std::memcpy(values.data(), take(n * sizeof(T)), n * sizeof(T));
    return values;
  }
  [[nodiscard]] bool at_end() const { return at_ == bytes_.size(); }

 private:
  const char* take(std::size_t n) {
    if (n > bytes_.size() - at_) throw std::logic_error("a share ends inside a value");
    const char* p = bytes_.data() + at_;
    at_ += n;
    return p;
  }
  const std::string& bytes_;
  std::size_t at_ = 0;
};

}  // namespace fxmimo::analysis::wire
