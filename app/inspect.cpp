#include "app/inspect.h"

#include <fmt/format.h>

#include <optional>

#include "app/protocol_parser.h"
#include "app/text_table.h"
#include "io/study_store.h"
#include "pipeline/stage.h"

namespace gazemill {

void print_store_overview(const std::string& store_path, std::ostream& out) {
  StudyStoreReader store(store_path);
  const Provenance prov = store.provenance();
  out << "store      " << store_path << '\n'
      << "created    " << prov.created_utc << " by gazemill " << prov.tool_version << '\n'
      << "protocol   " << prov.protocol_path << " (sha256 " << prov.protocol_sha256.substr(0, 12) << "…)\n"
      << "inputs     " << prov.inputs.size() << " files\n";
  if (!prov.shard.empty()) {
    out << "shard      " << prov.shard << " of a study of " << prov.study_recordings.size() << " recordings (gazemill merge joins the shards)\n";
  }
  out << "stages\n";
  std::optional<StageRecord> before;
  for (Stage s : kStages) {
    const auto r = store.stage_record(s);
    StageState state = StageState::absent;
    std::string note;
    if (r) {
      // Stale when marked so, or when its upstream result is no longer the one it was made from.
      const bool upstream_moved = s != Stage::ingest && (!before || before->key != r->upstream_key);
      state = r->state == StageState::stale || upstream_moved ? StageState::stale : StageState::current;
      // The key, to match a tables folder's manifest.json against; the protocol, when not the one ingest read.
      note = state == StageState::current ? "made " + r->created_utc + "  key " + r->key.substr(0, 12) +
                                                (r->protocol_path.empty() || r->protocol_path == prov.protocol_path ? "" : "  from " + r->protocol_path)
                                          : (r->stale_reason.empty() ? "made from results that have changed since" : r->stale_reason) +
                                                "; run gazemill " + to_string(s) + " (or gazemill run)";
    }
    out << fmt::format("  {:<8} {:<8} {}\n", to_string(s), to_string(state), note);
    before = r;
  }
  // "current" is about the store's own results; the protocol file may have moved on since.
  std::optional<StageRecord> last;
  for (Stage s : kStages) {
    if (auto r = store.stage_record(s)) last = r;
  }
  if (last && !last->protocol_path.empty()) {
    const std::optional<std::string> now = protocol_file_text(last->protocol_path);
    if (!now) out << "note       the protocol " << last->protocol_path << " is gone; the store keeps the text each stage ran with\n";
    else if (*now != last->protocol_text) {
      out << "note       " << last->protocol_path << " has changed since the " << to_string(last->stage)
          << " stage ran: `gazemill run` redoes the stages the change touches\n";
    }
  }
  out << "\n";

  TextTable table({"recording", "participant", "session", "rate_hz", "eyes", "trials", "samples", "span_s",
                   "missing_left", "missing_right"},
                  {false, false, false, true, false, true, true, true, true, true});
  std::uint64_t total_samples = 0;
  std::size_t total_trials = 0;
  const auto ids = store.recording_ids();
  for (const auto& id : ids) {
    const Recording r = store.read_recording(id, false);
    const SampleSummary s = store.sample_summary(id);
    auto share = [&](bool has, std::uint64_t missing) {
      if (!has) return std::string("-");
      return s.sample_count ? fmt::format("{:.1f} %", 100.0 * static_cast<double>(missing) / static_cast<double>(s.sample_count)) : std::string("-");
    };
    const std::string eyes = r.samples.has_left && r.samples.has_right ? "both" : r.samples.has_left ? "left" : "right";
    table.add_row({id, r.participant, r.session.empty() ? "-" : r.session, fmt::format("{:.0f}", r.sample_rate_hz), eyes,
                   std::to_string(r.trials.size()), std::to_string(s.sample_count),
                   fmt::format("{:.1f}", static_cast<double>(s.last_time_us - s.first_time_us) / 1e6),
                   share(r.samples.has_left, s.missing_left), share(r.samples.has_right, s.missing_right)});
    total_samples += s.sample_count;
    total_trials += r.trials.size();
  }
  table.print(out);
  out << '\n' << ids.size() << " recordings, " << total_trials << " trials, " << total_samples << " samples\n";
  if (!prov.repairs.empty()) {
    out << "\nrepairs made during ingest:\n";
    TextTable rep({"recording", "repair", "count"}, {false, false, true});
    for (const auto& r : prov.repairs) rep.add_row({r.recording_id, r.kind, std::to_string(r.count)});
    rep.print(out);
  }
}

}  // namespace gazemill
