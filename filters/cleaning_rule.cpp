#include "filters/cleaning_rule.h"

namespace gazemill {

void remove_fixation(CleanTrial& trial, CleanFixation& f, std::size_t rule, const std::string& reason, AuditChannel& channel,
                     const CleanFixation* merged_into) {
  if (!f.kept) return;
  f.kept = false;
  AuditNotice n;
  if (merged_into) {
    f.merged_away = true;
    f.merged_into = merged_into->id;
    n.merge = true;
    n.into_id = merged_into->id;
  }
  n.rule = rule;
  n.level = AuditLevel::fixation;
  n.participant = trial.participant;
  n.cell = trial.cell;
  n.trial = trial.trial;
  n.count = 1;
  n.ids = {f.id};
  n.reason = reason;
  channel.notice(n);
}

void remove_trial(CleanTrial& trial, std::size_t rule, const std::string& reason, AuditChannel& channel) {
  if (!trial.kept) return;
  trial.kept = false;
  AuditNotice n;
  n.rule = rule;
  n.participant = trial.participant;
  n.cell = trial.cell;
  n.trial = trial.trial;
  n.reason = reason;
  // Its remaining fixations and its samples go with it.
  n.level = AuditLevel::fixation;
  for (auto& f : trial.fixations) {
    if (!f.kept) continue;
    f.kept = false;
    n.ids.push_back(f.id);
  }
  n.count = n.ids.size();
  channel.notice(n);
  n.level = AuditLevel::sample;
  n.ids.clear();
  n.count = trial.samples;
  channel.notice(n);
  n.level = AuditLevel::trial;
  n.ids = {trial.id};
  n.count = 1;
  channel.notice(n);
}

void remove_participant(CleanParticipant& p, std::size_t rule, const std::string& reason, AuditChannel& channel) {
  if (!p.kept) return;
  p.kept = false;
  for (auto& t : p.trials) remove_trial(t, rule, reason, channel);
  AuditNotice n;
  n.rule = rule;
  n.level = AuditLevel::participant;
  n.participant = p.participant;
  n.count = 1;
  n.ids = {p.id};
  n.reason = reason;
  channel.notice(n);
}

}  // namespace gazemill
