#include "io/row_group_reader.h"

#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define GAZEMILL_X86 1
#endif

namespace gazemill {

RowGroupLayout row_group_layout(char delimiter, int columns) {
  RowGroupLayout g;
  g.delimiter = delimiter;
  g.columns = columns;
  if (columns < 1 || columns > kGroupMaxColumns) return g;
  for (int r = 0; r < kGroupRows; ++r) {
    const int row_end = r * columns + columns - 1;
    g.row_end_bits[row_end / 64] |= 1ull << (row_end % 64);
  }
  return g;
}

#ifdef GAZEMILL_X86
#ifndef __clang__
// GCC 12 on the intrinsics' own undefined vectors:
#pragma GCC diagnostic ignored "-Wmaybe-uninitialized"
#pragma GCC diagnostic ignored "-Wuninitialized"
#endif
// The build targets any x86-64; only these functions use AVX-512, and only
// after row_groups_supported() has asked the processor.
#define GAZEMILL_AVX512 __attribute__((target("avx512f,avx512bw,avx512dq,avx512vl,avx512cd,avx512vpopcntdq,avx512vbmi2,bmi,bmi2,popcnt")))

bool row_groups_supported() {
  __builtin_cpu_init();
  return __builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512bw") &&
         __builtin_cpu_supports("avx512dq") && __builtin_cpu_supports("avx512vl") &&
         __builtin_cpu_supports("avx512cd") && __builtin_cpu_supports("avx512vpopcntdq") &&
         __builtin_cpu_supports("avx512vbmi2") && __builtin_cpu_supports("bmi2");
}

namespace {

constexpr int kMaxSpan = 1024;  // bytes scanned for eight rows at most (offsets fit 16 bits)

// Per lane, all-ones in the first `count` bytes (count <= 8) and zero after.
GAZEMILL_AVX512 inline __m512i first_bytes(__m512i count) {
  const __m512i ones = _mm512_set1_epi64(-1);
  return _mm512_andnot_si512(_mm512_sllv_epi64(ones, _mm512_slli_epi64(count, 3)), ones);
}

// The value of the `count` (<= 8) decimal digits at the start of each lane
// of w; lanes where one of them is no digit are cleared from ok.
GAZEMILL_AVX512 inline __m512i digits_value(__m512i w, __m512i count, __mmask8& ok) {
  const __m512i digits = _mm512_and_si512(_mm512_sub_epi8(w, _mm512_set1_epi8('0')), first_bytes(count));
  const __m512i bad = _mm512_movm_epi8(_mm512_cmpgt_epu8_mask(digits, _mm512_set1_epi8(9)));
  ok &= ~_mm512_test_epi64_mask(bad, bad);
  // Right-aligned as eight digits with leading zeros, then combined pairwise:
  // 10 a + b, 100 ab + cd, 10000 abcd + efgh.
  const __m512i aligned = _mm512_sllv_epi64(digits, _mm512_slli_epi64(_mm512_sub_epi64(_mm512_set1_epi64(8), count), 3));
  const __m512i pairs = _mm512_maddubs_epi16(aligned, _mm512_set1_epi16(0x010A));
  const __m512i quads = _mm512_madd_epi16(pairs, _mm512_set1_epi32(0x00010064));
  return _mm512_add_epi64(_mm512_mul_epu32(quads, _mm512_set1_epi64(10000)), _mm512_srli_epi64(quads, 32));
}

// Lanes whose field (its first `len` bytes of w, len <= 8) is a missing token.
GAZEMILL_AVX512 inline __mmask8 token_lanes(__m512i w, __m512i len, const RowGroupLayout& layout) {
  const __m512i field = _mm512_and_si512(first_bytes(len), w);
  __mmask8 missing = 0;
  for (int i = 0; i < layout.token_count; ++i) {
    missing |= _mm512_cmpeq_epi64_mask(len, _mm512_set1_epi64(layout.token_length[i])) &
               _mm512_cmpeq_epi64_mask(field, _mm512_set1_epi64(static_cast<long long>(layout.token_word[i])));
  }
  return missing & _mm512_cmple_epu64_mask(len, _mm512_set1_epi64(8));
}

// The numbers of one column of the eight rows, a lane each.
struct Numbers {
  __m512i mantissa;
  __m512i decimals;
  __mmask8 negative, missing, has_dot, ok;
};

GAZEMILL_AVX512 inline Numbers read_numbers(const char* p, __m256i start, __m256i length,
                                            const RowGroupLayout& layout) {
  const __m512i ones = _mm512_set1_epi64(-1);
  const __m512i low_byte = _mm512_set1_epi64(0xff);
  __m512i len = _mm512_cvtepi32_epi64(length);
  // Eight bytes from each field's start; the caller keeps them before `end`.
  __m512i w = _mm512_i32gather_epi64(start, reinterpret_cast<const long long*>(p), 1);
  const __m512i raw = w;  // for the missing tokens, compared whole with the sign
  Numbers n;
  n.ok = _mm512_cmple_epu64_mask(len, _mm512_set1_epi64(8));
  n.negative = _mm512_cmpeq_epi64_mask(_mm512_and_si512(w, low_byte), _mm512_set1_epi64('-')) &
               _mm512_cmpneq_epi64_mask(len, _mm512_setzero_si512());
  w = _mm512_mask_srli_epi64(w, n.negative, w, 8);
  len = _mm512_mask_sub_epi64(len, n.negative, len, _mm512_set1_epi64(1));
  // Bytes past the field become zero, which is neither a dot nor a digit.
  w = _mm512_and_si512(first_bytes(len), w);

  const __m512i dots = _mm512_movm_epi8(_mm512_cmpeq_epi8_mask(w, _mm512_set1_epi8('.')));
  n.ok &= _mm512_cmple_epu64_mask(_mm512_popcnt_epi64(dots), _mm512_set1_epi64(8));  // one dot at most
  n.has_dot = _mm512_test_epi64_mask(dots, dots);
  // Bit index of the dot's byte: 63 - lzcnt of its lowest bit.
  const __m512i lowest = _mm512_and_si512(dots, _mm512_sub_epi64(_mm512_setzero_si512(), dots));
  const __m512i dot_bit = _mm512_sub_epi64(_mm512_set1_epi64(63), _mm512_lzcnt_epi64(lowest));
  const __m512i below = _mm512_andnot_si512(_mm512_sllv_epi64(ones, dot_bit), ones);
  // Take the dot out: the bytes after it move down one.
  w = _mm512_mask_or_epi64(w, n.has_dot, _mm512_and_si512(w, below), _mm512_andnot_si512(below, _mm512_srli_epi64(w, 8)));
  n.decimals = _mm512_maskz_sub_epi64(n.has_dot, _mm512_sub_epi64(len, _mm512_set1_epi64(1)), _mm512_srli_epi64(dot_bit, 3));
  const __m512i digit_count = _mm512_mask_sub_epi64(len, n.has_dot, len, _mm512_set1_epi64(1));

  n.mantissa = digits_value(w, digit_count, n.ok);

  // A field that is no number may be a missing token; a number is one only
  // where a token reads as a number (such as -1).
  const __mmask8 number = n.ok & ~_mm512_cmpeq_epi64_mask(digit_count, _mm512_setzero_si512());
  n.missing = 0;
  if (layout.numeric_tokens || number != 0xff) n.missing = token_lanes(raw, _mm512_cvtepi32_epi64(length), layout);
  n.ok = number | n.missing;
  return n;
}

// The separator offsets of a row group, 128 16-bit entries in four vectors.
struct SepTable {
  __m512i part[4];
};

// Entry `index` of the table for each of eight rows: two 64-entry halves,
// chosen by bit 6 of the index.
GAZEMILL_AVX512 inline __m128i table_entries(const SepTable& t, __m128i index) {
  const __m512i i = _mm512_castsi128_si512(index);
  const __m512i low = _mm512_permutex2var_epi16(t.part[0], i, t.part[1]);
  const __m512i high = _mm512_permutex2var_epi16(t.part[2], i, t.part[3]);
  const __mmask32 upper = _mm512_test_epi16_mask(i, _mm512_set1_epi16(64));
  return _mm512_castsi512_si128(_mm512_mask_blend_epi16(upper, low, high));
}

// Whole numbers of up to 15 digits (the row path's limit), as timestamps
// are: no sign, no dot, no missing token. Lanes that are not are cleared
// from the returned mask.
GAZEMILL_AVX512 inline __mmask8 read_whole_numbers(const char* p, __m256i start, __m256i length,
                                                   const RowGroupLayout& layout, __m512i& value) {
  // The last eight digits (or fewer) from where they start, the first ones
  // from the field's start.
  const __m256i high_length = _mm256_max_epi32(_mm256_sub_epi32(length, _mm256_set1_epi32(8)), _mm256_setzero_si256());
  const __m512i high_count = _mm512_cvtepi32_epi64(high_length);
  const __m512i low_count = _mm512_cvtepi32_epi64(_mm256_sub_epi32(length, high_length));
  const long long* base = reinterpret_cast<const long long*>(p);
  const __m512i first = _mm512_i32gather_epi64(start, base, 1);
  const __m512i len = _mm512_cvtepi32_epi64(length);
  __mmask8 ok = _mm512_cmpgt_epi64_mask(len, _mm512_setzero_si512()) & _mm512_cmple_epi64_mask(len, _mm512_set1_epi64(15));
  if (layout.numeric_tokens) ok &= ~token_lanes(first, len, layout);  // no other token is all digits
  const __m512i last = _mm512_i32gather_epi64(_mm256_add_epi32(start, high_length), base, 1);
  const __m512i high = digits_value(first, high_count, ok);
  const __m512i low = digits_value(last, low_count, ok);
  value = _mm512_add_epi64(_mm512_mul_epu32(high, _mm512_set1_epi64(100000000)), low);
  return ok;
}

// Times with decimals or a sign, of up to 8 characters (seconds such as
// 12.345), into out; the caller converts them as the row path does. Out of
// line: most files give whole times, and this would only crowd the loop.
GAZEMILL_AVX512 __attribute__((noinline)) bool read_decimal_times(const char* p, __m256i start, __m256i length,
                                                                  const RowGroupLayout& layout, RowGroup& out) {
  const Numbers t = read_numbers(p, start, length, layout);
  if ((t.ok & ~t.missing) != 0xff) return false;
  _mm512_storeu_si512(out.time, t.mantissa);
  _mm_storel_epi64(reinterpret_cast<__m128i*>(out.time_decimals), _mm512_cvtepi64_epi8(t.decimals));
  out.time_negative = t.negative;
  return true;
}

// Start and length of column `column`'s field in each of the eight rows;
// the last column's without the '\r' of the rows in crlf_rows.
GAZEMILL_AVX512 inline void field_bounds(const SepTable& t, __m128i row_base, int column, int columns, __mmask8 crlf_rows,
                                         __m256i& start, __m256i& length) {
  const __m128i index = _mm_add_epi16(row_base, _mm_set1_epi16(static_cast<short>(column)));
  const __m128i first = _mm_add_epi16(table_entries(t, index), _mm_set1_epi16(1));
  const __m128i after = table_entries(t, _mm_add_epi16(index, _mm_set1_epi16(1)));
  start = _mm256_cvtepu16_epi32(first);
  length = _mm256_cvtepu16_epi32(_mm_sub_epi16(after, first));
  if (column == columns - 1) length = _mm256_mask_sub_epi32(length, crlf_rows, length, _mm256_set1_epi32(1));
}

}  // namespace

// kParts: vectors of 32 separator offsets kept, enough for need + 1 entries.
template <int kParts>
GAZEMILL_AVX512 inline bool read_group(const char* p, const char* end, const RowGroupLayout& layout, RowGroup& out) {
  const int columns = layout.columns;
  const int need = kGroupRows * columns;
  // The table: the separators' offsets from p, in order, as 16-bit numbers
  // after a first entry of 0xFFFF, so that field g (row r, column j;
  // g = r * columns + j) starts one byte after entry g and ends at entry
  // g + 1. It stays in
  // registers: stored and loaded again, it waited on store forwarding.
  // Which separators are newlines, one bit each in order, checks that every
  // row has its fields and ends in '\n'.
  SepTable table;
  for (int q = 0; q < 4; ++q) table.part[q] = _mm512_setzero_si512();
  table.part[0] = _mm512_set_epi16(0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, -1);
  const __m512i lane = _mm512_set_epi16(31, 30, 29, 28, 27, 26, 25, 24, 23, 22, 21, 20, 19, 18, 17, 16, 15, 14, 13, 12, 11, 10, 9,
                                        8, 7, 6, 5, 4, 3, 2, 1, 0);
  std::uint64_t newline_bits[2] = {0, 0};
  int found = 0, newlines = 0;
  const char* group_end = nullptr;
  const __m512i delimiter = _mm512_set1_epi8(layout.delimiter);
  const __m512i newline = _mm512_set1_epi8('\n');
  const __m512i carriage_return = _mm512_set1_epi8('\r');
  std::uint64_t cr_before = 0;  // the previous chunk ended in '\r'
  std::uint64_t crlf_rows = 0;
  const __m512i byte_index = _mm512_set_epi8(63, 62, 61, 60, 59, 58, 57, 56, 55, 54, 53, 52, 51, 50, 49, 48, 47, 46, 45, 44,
                                             43, 42, 41, 40, 39, 38, 37, 36, 35, 34, 33, 32, 31, 30, 29, 28, 27, 26, 25, 24,
                                             23, 22, 21, 20, 19, 18, 17, 16, 15, 14, 13, 12, 11, 10, 9, 8, 7, 6, 5, 4, 3, 2,
                                             1, 0);
  for (int offset = 0; found < need; offset += 64) {
    if (offset + 64 > kMaxSpan || end - p < offset + 64 + 8) return false;
    const __m512i v = _mm512_loadu_si512(p + offset);
    const std::uint64_t nl = _mm512_cmpeq_epi8_mask(v, newline);
    const std::uint64_t m = _mm512_cmpeq_epi8_mask(v, delimiter) | nl;
    // Rows that end in "\r\n", one bit each in order: their last field is
    // one byte shorter.
    const std::uint64_t cr = _mm512_cmpeq_epi8_mask(v, carriage_return);
    if (newlines < kGroupRows) crlf_rows |= _pext_u64(((cr << 1) | cr_before) & nl, nl) << newlines;
    cr_before = cr >> 63;
    const int count = static_cast<int>(__builtin_popcountll(m));
    const __m512i at = _mm512_maskz_compress_epi8(m, byte_index);
    const __m512i base = _mm512_set1_epi16(static_cast<short>(offset));
    const __m512i low = _mm512_add_epi16(_mm512_cvtepu8_epi16(_mm512_castsi512_si256(at)), base);
    const __m512i high = _mm512_add_epi16(_mm512_cvtepu8_epi16(_mm512_extracti64x4_epi64(at, 1)), base);
    // Entry e of the table takes the chunk's separator e - 1 - found where
    // that is one of its `count`.
    for (int q = 0; q < kParts; ++q) {
      const __m512i k = _mm512_add_epi16(lane, _mm512_set1_epi16(static_cast<short>(32 * q - 1 - found)));
      const __mmask32 take = _mm512_cmpge_epi16_mask(k, _mm512_setzero_si512()) &
                             _mm512_cmplt_epi16_mask(k, _mm512_set1_epi16(static_cast<short>(count)));
      table.part[q] = _mm512_mask_blend_epi16(take, table.part[q], _mm512_permutex2var_epi16(low, k, high));
    }
    const std::uint64_t kinds = _pext_u64(nl, m);  // bit i: the chunk's i-th separator is a newline
    if (found < 64) {
      newline_bits[0] |= kinds << found;
      if (found > 0 && found + count > 64) newline_bits[1] |= kinds >> (64 - found);
    } else {
      newline_bits[1] |= kinds << (found - 64);
    }
    const int chunk_newlines = static_cast<int>(__builtin_popcountll(nl));
    if (newlines < kGroupRows && newlines + chunk_newlines >= kGroupRows) {
      group_end = p + offset + __builtin_ctzll(_pdep_u64(1ull << (kGroupRows - 1 - newlines), nl)) + 1;
    }
    newlines += chunk_newlines;
    found += count;
  }
  // Only the first `need` separators belong to the group.
  const std::uint64_t used0 = need >= 64 ? ~0ull : (1ull << need) - 1;
  const std::uint64_t used1 = need <= 64 ? 0 : need >= 128 ? ~0ull : (1ull << (need - 64)) - 1;
  if ((newline_bits[0] & used0) != layout.row_end_bits[0] || (newline_bits[1] & used1) != layout.row_end_bits[1]) {
    return false;
  }
  const __m128i row_base = _mm_mullo_epi16(_mm_setr_epi16(0, 1, 2, 3, 4, 5, 6, 7), _mm_set1_epi16(static_cast<short>(columns)));
  const __mmask8 cr_rows = static_cast<__mmask8>(crlf_rows);
  __m256i start, length;
  if (layout.message_column >= 0) {
    field_bounds(table, row_base, layout.message_column, columns, cr_rows, start, length);
    if (!_mm256_testz_si256(length, length)) return false;
  }
  {
    field_bounds(table, row_base, layout.time_column, columns, cr_rows, start, length);
    __m512i time;
    out.time_whole = read_whole_numbers(p, start, length, layout, time) == 0xff;
    if (out.time_whole) {
      _mm512_storeu_si512(out.time, time);
    } else if (!read_decimal_times(p, start, length, layout, out)) {
      return false;
    }
  }
  const __m512d inverse_pow10 = _mm512_setr_pd(1e0, 1e-1, 1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7);
  for (int s = 0; s < layout.value_count; ++s) {
    const int column = layout.value_columns[s];
    field_bounds(table, row_base, column, columns, cr_rows, start, length);
    const Numbers n = read_numbers(p, start, length, layout);
    if (n.ok != 0xff) return false;
    // As decimal_to_float: the mantissa (< 10^8, and < 10^7 when there are
    // decimals) times the nearest double to 10^-decimals, signed, narrowed.
    __m512d v = _mm512_mul_pd(_mm512_cvtepu64_pd(n.mantissa), _mm512_permutexvar_pd(n.decimals, inverse_pow10));
    v = _mm512_mask_xor_pd(v, n.negative, v, _mm512_set1_pd(-0.0));
    __m256 f = _mm512_cvtpd_ps(v);
    f = _mm256_mask_blend_ps(n.missing, f, _mm256_set1_ps(__builtin_nanf("")));
    _mm256_storeu_ps(out.value[s], f);
  }
  out.end = group_end;
  return true;
}

GAZEMILL_AVX512 bool read_row_group(const char* p, const char* end, const RowGroupLayout& layout, RowGroup& out) {
  if (layout.columns < 1 || layout.columns > kGroupMaxColumns) return false;
  return kGroupRows * layout.columns < 64 ? read_group<2>(p, end, layout, out) : read_group<4>(p, end, layout, out);
}

GAZEMILL_AVX512 int store_eye_group(const RowGroup& g, const int slot[3], bool zero_is_missing, float* x, float* y,
                                    float* pupil, std::uint8_t* valid) {
  const __m256 nan = _mm256_set1_ps(__builtin_nanf(""));
  const __m256 gx = slot[0] < 0 ? nan : _mm256_loadu_ps(g.value[slot[0]]);
  const __m256 gy = slot[1] < 0 ? nan : _mm256_loadu_ps(g.value[slot[1]]);
  // A position needs both coordinates, and with zero_is_missing 0,0 is none
  // (as put_eye).
  __mmask8 ok = _mm256_cmp_ps_mask(gx, gx, _CMP_ORD_Q) & _mm256_cmp_ps_mask(gy, gy, _CMP_ORD_Q);
  if (zero_is_missing) {
    ok &= ~(_mm256_cmp_ps_mask(gx, _mm256_setzero_ps(), _CMP_EQ_OQ) & _mm256_cmp_ps_mask(gy, _mm256_setzero_ps(), _CMP_EQ_OQ));
  }
  _mm256_storeu_ps(x, _mm256_mask_blend_ps(ok, nan, gx));
  _mm256_storeu_ps(y, _mm256_mask_blend_ps(ok, nan, gy));
  _mm256_storeu_ps(pupil, slot[2] < 0 ? nan : _mm256_loadu_ps(g.value[slot[2]]));
  _mm_storel_epi64(reinterpret_cast<__m128i*>(valid), _mm_maskz_set1_epi8(ok, 1));
  return kGroupRows - __builtin_popcount(ok);
}

#else

int store_eye_group(const RowGroup&, const int[3], bool, float*, float*, float*, std::uint8_t*) { return 0; }
bool row_groups_supported() { return false; }
bool read_row_group(const char*, const char*, const RowGroupLayout&, RowGroup&) { return false; }

#endif

}  // namespace gazemill
