#include "app/warning_log.h"

#include "io/study_store.h"

#include <spdlog/details/os.h>
#include <spdlog/sinks/base_sink.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <memory>
#include <mutex>
#include <optional>

namespace gazemill {

// One sink on the default logger for the whole program, installed once (the
// logger reads its sink list without a lock, so the list must not change
// while other threads log); the captures come and go under the sink's lock.
struct WarningCapture {
  std::optional<std::size_t> thread;  // spdlog's id of the one thread heard, if only one
  std::vector<std::string> kept;
};

class WarningSink : public spdlog::sinks::base_sink<std::mutex> {
 public:
  using Capture = WarningCapture;
  void add(Capture* c) {
    std::lock_guard<std::mutex> lock(mutex_);
    captures_.push_back(c);
  }
  void remove(Capture* c) {
    std::lock_guard<std::mutex> lock(mutex_);
    captures_.erase(std::remove(captures_.begin(), captures_.end(), c), captures_.end());
  }
  std::vector<std::string> take(Capture* c) {
    std::lock_guard<std::mutex> lock(mutex_);
    return std::exchange(c->kept, {});
  }

 protected:
  void sink_it_(const spdlog::details::log_msg& m) override {  // under mutex_
    if (m.level != spdlog::level::warn) return;
    for (Capture* c : captures_) {
      if (!c->thread || *c->thread == m.thread_id) c->kept.emplace_back(m.payload.data(), m.payload.size());
    }
  }
  void flush_() override {}

 private:
  std::vector<Capture*> captures_;
};

namespace {

// The program's sink, on the default logger from the first call on (main
// makes that call before any other thread runs).
WarningSink& warning_sink() {
  static const std::shared_ptr<WarningSink> sink = [] {
    auto s = std::make_shared<WarningSink>();
    s->set_level(spdlog::level::warn);
    spdlog::default_logger()->sinks().push_back(s);
    return s;
  }();
  return *sink;
}

}  // namespace

CapturedWarnings::CapturedWarnings(From from) : capture_(std::make_unique<WarningCapture>()) {
  if (from == From::this_thread) capture_->thread = spdlog::details::os::thread_id();
  warning_sink().add(capture_.get());
}

CapturedWarnings::~CapturedWarnings() { warning_sink().remove(capture_.get()); }

std::vector<std::string> CapturedWarnings::take() { return warning_sink().take(capture_.get()); }

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
  warning_sink().set_level(spdlog::level::warn);  // installed now, before any other thread logs
  spdlog::set_level(std::min(l, spdlog::level::warn));
}

}  // namespace gazemill
