#include "app/warning_log.h"

#include "io/study_store.h"

#include <spdlog/details/os.h>
#include <spdlog/sinks/base_sink.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <mutex>
#include <optional>

namespace gazemill {

class WarningSink : public spdlog::sinks::base_sink<std::mutex> {
 public:
  explicit WarningSink(std::optional<std::size_t> thread) : thread_(thread) {}
  std::vector<std::string> take() {
    std::lock_guard<std::mutex> lock(mutex_);
    return std::exchange(kept_, {});
  }

 protected:
  void sink_it_(const spdlog::details::log_msg& m) override {
    if (m.level == spdlog::level::warn && (!thread_ || *thread_ == m.thread_id)) kept_.emplace_back(m.payload.data(), m.payload.size());
  }
  void flush_() override {}

 private:
  std::optional<std::size_t> thread_;  // spdlog's id of the one thread heard, if only one
  std::vector<std::string> kept_;
};

CapturedWarnings::CapturedWarnings(From from)
    : sink_(std::make_shared<WarningSink>(from == From::this_thread ? std::optional<std::size_t>(spdlog::details::os::thread_id()) : std::nullopt)) {
  sink_->set_level(spdlog::level::warn);
  spdlog::default_logger()->sinks().push_back(sink_);
}

CapturedWarnings::~CapturedWarnings() {
  auto& sinks = spdlog::default_logger()->sinks();
  sinks.erase(std::remove(sinks.begin(), sinks.end(), sink_), sinks.end());
}

std::vector<std::string> CapturedWarnings::take() { return sink_->take(); }

std::vector<std::pair<Stage, std::string>> kept_warnings(const StudyStoreReader& store) {
  std::vector<std::pair<Stage, std::string>> out;
  for (Stage s : kStages) {
    const auto r = store.stage_record(s);
    if (!r || r->state != StageState::current) continue;
    for (const auto& w : r->warnings) out.emplace_back(s, w);
    if (s == Stage::ingest) {
      for (const auto& id : store.recording_ids()) {
        for (const auto& w : recording_warnings(store, id)) out.emplace_back(s, w);
      }
    }
  }
  return out;
}

void set_terminal_level(int level) {
  const auto l = static_cast<spdlog::level::level_enum>(level);
  for (auto& s : spdlog::default_logger()->sinks()) s->set_level(l);
  spdlog::set_level(std::min(l, spdlog::level::warn));
}

}  // namespace gazemill
