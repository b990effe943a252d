// Parses a delimited sample export as ingest would, then throws the samples
// away: the parsing cost alone, for bench/ingest.
// usage: gazemill_bench_parse PROTOCOL FILE [repeats]
// prints: best seconds, samples, peak resident memory in bytes

#include <chrono>
#include <cstdio>
#include <cstdlib>

#include "app/protocol_parser.h"
#include "app/run_stats.h"
#include "io/delimited_reader.h"

int main(int argc, char** argv) {
  if (argc < 3) {
    std::fprintf(stderr, "usage: %s PROTOCOL FILE [repeats]\n", argv[0]);
    return 2;
  }
  const gazemill::Protocol p = gazemill::parse_protocol_file(argv[1]);
  gazemill::DelimitedReadOptions opt;
  opt.layout = p.input.table;
  const int repeats = argc > 3 ? std::atoi(argv[3]) : 3;
  double best = 1e300;
  std::uint64_t samples = 0;
  for (int i = 0; i < repeats; ++i) {
    gazemill::NullSink sink;
    const auto t0 = std::chrono::steady_clock::now();
    samples = gazemill::read_delimited(argv[2], opt, sink).samples;
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  }
  std::printf("%.6f %llu %llu\n", best, static_cast<unsigned long long>(samples),
              static_cast<unsigned long long>(gazemill::peak_rss_bytes()));
  return 0;
}
