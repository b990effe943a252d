#include "sim/study_design.h"

#include <stdexcept>

namespace gazemill::sim {

ResolvedItem resolve_item(const ItemTemplate& item, std::size_t condition) {
  ResolvedItem out;
  const auto open = item.marked_text.find('[');
  if (open == std::string::npos) {
    out.marked_text = item.marked_text;
    return out;
  }
  const auto close = item.marked_text.find(']', open);
  if (close == std::string::npos) throw std::invalid_argument("item " + item.id + ": '[' without ']'");
  std::vector<std::string> variants;
  std::string v;
  for (std::size_t i = open + 1; i < close; ++i) {
    if (item.marked_text[i] == '|') {
      variants.push_back(v);
      v.clear();
    } else {
      v += item.marked_text[i];
    }
  }
  variants.push_back(v);
  if (condition >= variants.size()) throw std::invalid_argument("item " + item.id + ": no variant for condition " + std::to_string(condition));
  out.marked_text = item.marked_text.substr(0, open) + variants[condition] + item.marked_text.substr(close + 1);
  int region = 0;
  for (std::size_t i = 0; i < open; ++i) region += item.marked_text[i] == '/';
  out.target_region = region;
  return out;
}

std::size_t condition_for(std::size_t participant, std::size_t item, std::size_t conditions) {
  return (item + participant) % conditions;
}

StudyDesign demo_design() {
  StudyDesign d;
  d.name = "harbour-news";
  d.task = "harbournews";
  d.conditions = {"frequent", "rare"};
  // Our own sentences. Regions are separated by '/'; the target region has a
  // frequent and a rare variant; the region after it measures spillover.
  d.items = {
      {"1", "The harbour master / announced that the / [boat|ketch] / would leave / the quay / before noon on Friday."},
      {"2", "After the storm / the fishermen / found a / [net|seine] / tangled / around the old / lighthouse steps."},
      {"3", "The council / agreed to repair / the / [wall|groyne] / that protects / the eastern beach / from winter waves."},
      {"4", "A young reporter / watched the / [crane|davit] / lift the / lifeboat / out of the water / for its yearly check."},
      {"5", "Every Sunday / the baker / sells / [bread|manchet] / to the sailors / who wait / for the morning tide."},
      {"6", "The museum / has bought / an old / [map|portolan] / that shows / the town / as it was three centuries ago."},
      {"7", "Children / from the school / painted the / [shed|bothy] / next to / the slipway / in bright blue and yellow."},
      {"8", "The new / ferry timetable / lists a / [stop|halt] / at the island / twice a day / during the summer months."},
      {"9", "Local divers / recovered a / [bell|binnacle] / from the wreck / near the / harbour entrance / last Tuesday."},
      {"10", "The mayor / thanked the / [crew|lascars] / of the tugboat / for their / quick help / during the fire."},
      {"11", "Tourists / often ask / where the / [fish|pilchards] / come from / and the / fishmonger always smiles."},
      {"12", "The weather / office warned / of a / [gale|williwaw] / that could / close the port / until Thursday evening."},
  };
  return d;
}

}  // namespace gazemill::sim
