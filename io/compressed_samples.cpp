#include "io/compressed_samples.h"

#include <algorithm>
#include <cstring>
#include <stdexcept>

#include "io/chunk_compressor.h"

namespace gazemill {

std::size_t element_size(ColumnType type) {
  switch (type) {
    case ColumnType::int64: return 8;
    case ColumnType::float32: return 4;
    case ColumnType::uint8: return 1;
  }
  return 1;
}

std::uint64_t CompressedColumn::compressed_bytes() const {
  std::uint64_t n = 0;
  for (const auto& c : chunks) n += c.size();
  return n;
}

CompressedColumn compress_column(const std::string& name, ColumnType type, const std::string& unit, const void* values,
                                 std::uint64_t rows, std::size_t chunk_rows, int deflate_level) {
  CompressedColumn c{name, type, unit, rows, chunk_rows, {}};
  const std::size_t esize = element_size(type);
  const char* p = static_cast<const char*>(values);
  std::vector<char> whole(chunk_rows * esize);
  for (std::uint64_t first = 0; first < rows; first += chunk_rows) {
    const std::size_t n = static_cast<std::size_t>(std::min<std::uint64_t>(chunk_rows, rows - first));
    // Chunks are always whole; the padding lies beyond the dataset's extent (as ChunkedColumnWriter pads).
    std::memcpy(whole.data(), p + first * esize, n * esize);
    std::memset(whole.data() + n * esize, 0, (chunk_rows - n) * esize);
    c.chunks.push_back(shuffle_and_deflate(whole.data(), whole.size(), esize, deflate_level));
  }
  return c;
}

void decode_chunk(const CompressedColumn& column, std::size_t k, std::vector<char>& out) {
  const std::size_t esize = element_size(column.type);
  const std::size_t whole = column.chunk_rows * esize;
  const std::vector<char>& chunk = column.chunks.at(k);
  out.resize(whole);
  if (!inflate_and_unshuffle(chunk.data(), chunk.size(), out.data(), whole, esize)) {
    throw std::runtime_error("chunk " + std::to_string(k) + " of " + column.name + " is damaged");
  }
  const std::uint64_t first = static_cast<std::uint64_t>(k) * column.chunk_rows;
  out.resize(static_cast<std::size_t>(std::min<std::uint64_t>(column.chunk_rows, column.rows - first)) * esize);
}

std::vector<char> decode_column(const CompressedColumn& column) {
  std::vector<char> all, part;
  all.reserve(column.rows * element_size(column.type));
  for (std::size_t k = 0; k < column.chunks.size(); ++k) {
    decode_chunk(column, k, part);
    all.insert(all.end(), part.begin(), part.end());
  }
  return all;
}

namespace {

std::vector<CompressedColumn> empty_columns(bool left, bool right, std::size_t chunk_rows) {
  std::vector<CompressedColumn> c;
  c.push_back({"time_us", ColumnType::int64, "us", 0, chunk_rows, {}});
  for (Eye eye : {Eye::left, Eye::right}) {
    if ((eye == Eye::left && !left) || (eye == Eye::right && !right)) continue;
    const std::string p = to_string(eye) + "_";
    c.push_back({p + "x_px", ColumnType::float32, "px", 0, chunk_rows, {}});
    c.push_back({p + "y_px", ColumnType::float32, "px", 0, chunk_rows, {}});
    c.push_back({p + "pupil", ColumnType::float32, "tracker units", 0, chunk_rows, {}});
    c.push_back({p + "valid", ColumnType::uint8, "", 0, chunk_rows, {}});
  }
  return c;
}

template <typename T>
void append_range(std::vector<T>& to, const std::vector<T>& from, std::size_t first, std::size_t last) {
  to.insert(to.end(), from.begin() + static_cast<std::ptrdiff_t>(first), from.begin() + static_cast<std::ptrdiff_t>(last));
}

std::uint64_t raw_bytes_per_sample(bool left, bool right) {
  return sizeof(Microseconds) + (left ? 13 : 0) + (right ? 13 : 0);
}

}  // namespace

CompressedSamples::CompressedSamples(bool left, bool right, std::size_t chunk_rows, int deflate_level, std::uint64_t raw_budget_bytes)
    : left_(left), right_(right), chunk_rows_(chunk_rows), level_(deflate_level), raw_budget_bytes_(raw_budget_bytes),
      columns_(empty_columns(left, right, chunk_rows)) {
  staged_ = fresh_chunk();
}

CompressedSamples::CompressedSamples(bool left, bool right, std::vector<CompressedColumn> columns, std::uint64_t raw_budget_bytes)
    : left_(left), right_(right), chunk_rows_(columns.empty() ? 0 : columns.front().chunk_rows), level_(0),
      raw_budget_bytes_(raw_budget_bytes), columns_(std::move(columns)) {
  if (columns_.size() != empty_columns(left, right, chunk_rows_).size()) throw std::invalid_argument("wrong number of sample columns");
  rows_ = columns_.front().rows;
  counted_ = false;
  std::vector<char> t;
  for (std::size_t k = 0; k < columns_.front().chunks.size(); ++k) {
    decode_chunk(columns_.front(), k, t);
    const auto* times = reinterpret_cast<const Microseconds*>(t.data());
    const std::size_t n = t.size() / sizeof(Microseconds);
    chunk_first_us_.push_back(n ? times[0] : 0);
    chunk_last_us_.push_back(n ? times[n - 1] : 0);
  }
  // Decoded once and kept when it fits the budget; otherwise slices decode.
  raw_ = rows_ * raw_bytes_per_sample(left, right) <= raw_budget_bytes_;
  if (!raw_) return;
  for (std::size_t first = 0; first < rows_; first += chunk_rows_) {
    raw_ = false;  // slice() decodes while the chunks are being kept
    raw_chunks_.push_back(slice(first, std::min<std::size_t>(rows_, first + chunk_rows_)));
    raw_ = true;
  }
}

SampleColumns CompressedSamples::fresh_chunk() const {
  SampleColumns c;
  c.has_left = left_;
  c.has_right = right_;
  c.reserve(chunk_rows_);
  return c;
}

void CompressedSamples::append(const SampleColumns& chunk) {
  rows_ += chunk.size();
  std::size_t at = 0;
  while (at < chunk.size()) {
    const std::size_t take = std::min(chunk.size() - at, chunk_rows_ - staged_.size());
    append_range(staged_.time_us, chunk.time_us, at, at + take);
    for (Eye eye : {Eye::left, Eye::right}) {
      if ((eye == Eye::left && !left_) || (eye == Eye::right && !right_)) continue;
      const EyeSamples& from = chunk.eye(eye);
      EyeSamples& to = staged_.eye(eye);
      append_range(to.x_px, from.x_px, at, at + take);
      append_range(to.y_px, from.y_px, at, at + take);
      append_range(to.pupil, from.pupil, at, at + take);
      append_range(to.valid, from.valid, at, at + take);
    }
    at += take;
    if (staged_.size() == chunk_rows_) compress_staged();
  }
}

void CompressedSamples::compress_staged() {
  const std::size_t n = staged_.size();
  if (n == 0) return;
  std::size_t c = 0;
  auto add = [&](const void* values) {
    CompressedColumn& col = columns_[c++];
    CompressedColumn part = compress_column(col.name, col.type, col.unit, values, n, chunk_rows_, level_);
    col.rows += n;
    col.chunks.push_back(std::move(part.chunks.front()));
  };
  add(staged_.time_us.data());
  for (std::size_t i = 0; i < n; ++i) {
    without_gaze_ += !((left_ && staged_.left.valid[i]) || (right_ && staged_.right.valid[i]));
  }
  chunk_first_us_.push_back(staged_.time_us.front());
  chunk_last_us_.push_back(staged_.time_us.back());
  for (Eye eye : {Eye::left, Eye::right}) {
    if ((eye == Eye::left && !left_) || (eye == Eye::right && !right_)) continue;
    const EyeSamples& e = staged_.eye(eye);
    add(e.x_px.data());
    add(e.y_px.data());
    add(e.pupil.data());
    add(e.valid.data());
  }
  // The staged rows become the kept chunk (no copy) while the recording fits the budget.
  if (raw_ && (rows_ * raw_bytes_per_sample(left_, right_) > raw_budget_bytes_)) {
    raw_ = false;
    raw_chunks_ = {};
  }
  if (raw_) {
    raw_chunks_.push_back(std::move(staged_));
    staged_ = fresh_chunk();
  } else {
    staged_.clear();
  }
}

void CompressedSamples::finish() { compress_staged(); }

std::uint64_t CompressedSamples::compressed_bytes() const {
  std::uint64_t n = 0;
  for (const auto& c : columns_) n += c.compressed_bytes();
  return n;
}

void CompressedSamples::drop_chunks() {
  for (auto& c : columns_) c.chunks = {};
}

SampleColumns CompressedSamples::slice(std::size_t first, std::size_t last) const {
  SampleColumns out;
  out.has_left = left_;
  out.has_right = right_;
  last = std::min<std::size_t>(last, rows_);
  if (first >= last) return out;
  if (raw_) {
    for (std::size_t i = first; i < last;) {
      const std::size_t k = i / chunk_rows_;
      const std::size_t chunk_first = k * chunk_rows_;
      const SampleColumns& c = k < raw_chunks_.size() ? raw_chunks_[k] : staged_;  // the last rows may still be staged
      const std::size_t end = std::min(last, chunk_first + c.size());
      append_range(out.time_us, c.time_us, i - chunk_first, end - chunk_first);
      for (Eye eye : {Eye::left, Eye::right}) {
        if ((eye == Eye::left && !left_) || (eye == Eye::right && !right_)) continue;
        const EyeSamples& from = c.eye(eye);
        EyeSamples& to = out.eye(eye);
        append_range(to.x_px, from.x_px, i - chunk_first, end - chunk_first);
        append_range(to.y_px, from.y_px, i - chunk_first, end - chunk_first);
        append_range(to.pupil, from.pupil, i - chunk_first, end - chunk_first);
        append_range(to.valid, from.valid, i - chunk_first, end - chunk_first);
      }
      i = end;
    }
    return out;
  }
  if (cached_.size() != columns_.size()) {
    cached_.assign(columns_.size(), {});
    cached_chunk_.assign(columns_.size(), static_cast<std::size_t>(-1));
  }
  auto gather = [&](std::size_t c, auto& to) {
    using T = typename std::decay_t<decltype(to)>::value_type;
    const CompressedColumn& col = columns_[c];
    to.resize(last - first);
    for (std::size_t i = first; i < last;) {
      const std::size_t k = i / col.chunk_rows;
      if (cached_chunk_[c] != k) {
        decode_chunk(col, k, cached_[c]);
        cached_chunk_[c] = k;
      }
      const std::size_t chunk_first = k * col.chunk_rows;
      const std::size_t end = std::min(last, chunk_first + cached_[c].size() / sizeof(T));
      std::memcpy(to.data() + (i - first), cached_[c].data() + (i - chunk_first) * sizeof(T), (end - i) * sizeof(T));
      i = end;
    }
  };
  gather(0, out.time_us);
  std::size_t c = 1;
  for (Eye eye : {Eye::left, Eye::right}) {
    if ((eye == Eye::left && !left_) || (eye == Eye::right && !right_)) continue;
    EyeSamples& to = out.eye(eye);
    gather(c++, to.x_px);
    gather(c++, to.y_px);
    gather(c++, to.pupil);
    gather(c++, to.valid);
  }
  return out;
}

// One chunk's times: kept ones as they are, or decoded (and cached for the next look).
const std::vector<Microseconds>& CompressedSamples::chunk_times(std::size_t k) const {
  if (raw_ && k < raw_chunks_.size()) return raw_chunks_[k].time_us;
  if (times_chunk_ != k) {
    std::vector<char> bytes;
    decode_chunk(columns_.front(), k, bytes);
    times_.resize(bytes.size() / sizeof(Microseconds));
    std::memcpy(times_.data(), bytes.data(), bytes.size());
    times_chunk_ = k;
  }
  return times_;
}

// Binary search over the chunks' bounds, then within the one chunk that holds the answer.
std::size_t CompressedSamples::lower_bound(Microseconds t) const {
  const std::size_t k = static_cast<std::size_t>(std::lower_bound(chunk_last_us_.begin(), chunk_last_us_.end(), t) - chunk_last_us_.begin());
  if (k >= chunk_last_us_.size()) return rows_;
  const auto& times = chunk_times(k);
  return k * chunk_rows_ + static_cast<std::size_t>(std::lower_bound(times.begin(), times.end(), t) - times.begin());
}

std::size_t CompressedSamples::upper_bound(Microseconds t) const {
  const std::size_t k = static_cast<std::size_t>(std::upper_bound(chunk_last_us_.begin(), chunk_last_us_.end(), t) - chunk_last_us_.begin());
  if (k >= chunk_last_us_.size()) return rows_;
  const auto& times = chunk_times(k);
  return k * chunk_rows_ + static_cast<std::size_t>(std::upper_bound(times.begin(), times.end(), t) - times.begin());
}

std::pair<std::size_t, std::size_t> CompressedSamples::range(Microseconds start_us, Microseconds end_us) const {
  const std::size_t a = lower_bound(start_us);
  return {a, std::max(a, upper_bound(end_us))};
}

SampleColumns decode_samples(bool left, bool right, std::vector<CompressedColumn> columns) {
  const CompressedSamples samples(left, right, std::move(columns), 0);  // no raw copy: one slice decodes each chunk once
  return samples.slice(0, samples.size());
}

}  // namespace gazemill
