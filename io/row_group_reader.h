#pragma once
// Reads eight plain rows of a delimited export at once with AVX-512: the
// separators of all eight are found 64 bytes at a time, and then each column
// is read as eight numbers side by side, one row per vector lane, so that
// finding and converting digits costs about what one row's would. A row that
// is not plain (a message, a word, a long number, a wrong field count) fails
// the whole group, and the caller reads those rows one at a time; the result
// is the same either way (tests/test_row_groups.cpp).

#include <cstdint>

namespace gazemill {

inline constexpr int kGroupRows = 8;
inline constexpr int kGroupMaxValues = 6;  // x, y and pupil of two eyes
inline constexpr int kGroupMaxColumns = 15;
inline constexpr int kGroupMaxTokens = 8;

struct RowGroupLayout {
  char delimiter = '\t';
  int columns = 0;                 // fields per row
  int time_column = -1;
  int value_columns[kGroupMaxValues] = {};  // columns read as floats, in output order
  int value_count = 0;
  int message_column = -1;         // must be empty in a plain row; -1: none;
                                   // any other column is skipped unread
  // Missing-value tokens of at most 8 bytes, as little-endian words.
  std::uint64_t token_word[kGroupMaxTokens] = {};
  int token_length[kGroupMaxTokens] = {};
  int token_count = 0;
  bool numeric_tokens = false;     // a token reads as a number (such as -1)
  // Of the separators of eight rows in order, the newlines: bit r * columns
  // + columns - 1 for each row r.
  std::uint64_t row_end_bits[2] = {0, 0};
};

struct RowGroup {
  // Times in the file's unit: whole numbers, or where time_whole is false,
  // digits without the dot and sign, with their decimals and signs.
  std::uint64_t time[kGroupRows];
  bool time_whole = true;
  std::uint8_t time_decimals[kGroupRows] = {};
  std::uint8_t time_negative = 0;  // bit i: row i's time is negative
  float value[kGroupMaxValues][kGroupRows];  // NaN where missing
  const char* end = nullptr;       // just past the eighth row's '\n'
};

/// The layout for `columns` fields per row; tokens and columns are added after.
RowGroupLayout row_group_layout(char delimiter, int columns);

/// Whether this processor can run read_row_group.
bool row_groups_supported();

/// Reads the eight rows at p when every one is plain: each field in a value
/// column a plain decimal of at most 8 characters (sign and dot included) or
/// a missing token, the time a whole number of 1 to 15 digits or a plain
/// decimal of at most 8 characters, the message empty, the field count
/// right, each row ending in '\n' (or "\r\n"), all eight within 1 KiB. Reads nothing at or past `end`, and fails when the
/// rows come within 8 bytes of it. False when any row is not plain.
bool read_row_group(const char* p, const char* end, const RowGroupLayout& layout, RowGroup& out);

/// Stores one eye's eight samples of a group at x, y, pupil and valid (eight
/// entries each) by the reader's rule: a position needs both coordinates,
/// and with zero_is_missing 0,0 is none. slot holds the x, y and pupil slots
/// of out.value, -1 for a column not mapped. Returns how many of the eight
/// have no position.
int store_eye_group(const RowGroup& group, const int slot[3], bool zero_is_missing, float* x, float* y, float* pupil,
                    std::uint8_t* valid);

}  // namespace gazemill
