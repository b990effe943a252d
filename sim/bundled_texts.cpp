// The bundled texts of the simulated study: short news reports from a
// harbour town, written for gazemill (invented, like the readers). Sentence
// items have a target region with a frequent and a rare variant, chosen so
// that the rare word is much less common in English (our judgement, no corpus
// counts) and fits the sentence as well, and a spillover region after it.
// Passages are read as they stand, every word a region.

#include "sim/study_design.h"

namespace gazemill::sim {

const std::vector<SentenceItem>& bundled_sentence_items() {
  static const std::vector<SentenceItem> items = {
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
      {"13", "The ferry company / said that the old / [rope|hawser] / had snapped / in the night / while the tide was turning."},
      {"14", "Visitors to the pier / can now see / a restored / [ship|barque] / moored beside / the customs house / all summer."},
      {"15", "The narrow / [lane|wynd] / behind the / fish market / will be closed / for repairs / until the end of May."},
      {"16", "A retired teacher / gave the museum / a wooden / [chest|coffer] / that once / belonged to / a whaling captain."},
      {"17", "The volunteers / lit an old / [lamp|cresset] / on the harbour wall / to mark / the hundredth year / of the lifeboat station."},
      {"18", "The family / moved back / to their / [home|croft] / above the bay / after the flood waters / had gone down."},
      {"19", "Birdwatchers / on the headland / counted a / [bird|petrel] / that had not / been seen there / for forty years."},
      {"20", "A stray / [dog|cur] / followed the / postman / along the seafront / every morning / last winter."},
      {"21", "The harvest fair / will end / with a / [dance|reel] / in the old / net loft / on Saturday night."},
      {"22", "Fishermen / were told / to expect / [fog|haar] / along the / whole coast / until the weekend."},
      {"23", "The school choir / sang an old / [song|shanty] / for the / visiting sailors / at the town hall."},
      {"24", "Workers / found a / broken / [anchor|kedge] / buried in / the mud / below the old jetty."},
      {"25", "The yacht club / raised a / new / [flag|burgee] / above the / clubhouse / at the start of the season."},
      {"26", "Seals / were seen / resting on / the / [island|skerry] / near the / mouth of the harbour."},
      {"27", "The path / to the / [hill|knoll] / behind the / lighthouse / has been / cleared of gorse."},
      {"28", "Heavy rain / made the / [stream|rill] / beside the / churchyard / overflow / onto the road."},
      {"29", "The council / voted to / rebuild the / [bridge|viaduct] / that carries / the railway / over the river."},
      {"30", "A local / [nurse|matron] / was thanked / at the / harbour festival / for thirty years / of service."},
      {"31", "The new / [teacher|dominie] / at the / village school / has started / a sailing club / for the pupils."},
      {"32", "The / [captain|coxswain] / of the lifeboat / praised / the crew / for their calm / during the rescue."},
      {"33", "The town / has asked / the / [priest|curate] / to bless / the fishing fleet / before it sails."},
      {"34", "Divers / brought up / a small / [box|casket] / full of coins / from the / sunken trading ship."},
      {"35", "The hotel / kitchen / served a / [stew|pottage] / of mussels / and leeks / at the opening dinner."},
      {"36", "The brewery / on the quay / has made / a / [beer|mead] / from / local heather honey."},
      {"37", "The old / [church|kirk] / on the cliff / will open / its doors / to visitors / every Sunday in July."},
      {"38", "The weekly / [market|bazaar] / in the square / drew / large crowds / despite / the cold wind."},
      {"39", "A gust / tore the / [sail|jib] / of a small / dinghy / during the / regatta on Monday."},
      {"40", "The storm / washed a / [bag|creel] / of crabs / onto the / promenade / early on Tuesday."},
      {"41", "Thieves / forced the / [door|wicket] / of the / boathouse / and took / two outboard motors."},
      {"42", "Painters / are restoring / every / [window|dormer] / of the / old sail loft / on the north quay."},
      {"43", "The bells / in the / [tower|belfry] / of the / harbour church / will ring / again at Easter."},
      {"44", "A new / [fence|paling] / along the / cliff path / should keep / walkers away / from the edge."},
      {"45", "The harbour / [shop|emporium] / on the corner / has sold / maps and tide tables / since eighteen ninety."},
      {"46", "A young / [child|urchin] / found a / message / in a bottle / on the / beach below the fort."},
      {"47", "An island / [farmer|crofter] / brought / sheep / across the sound / on the / morning ferry."},
      {"48", "The boy / was given / a silver / [coin|florin] / by the / ship owner / for finding his dog."},
      {"49", "Archivists / found a / [letter|missive] / from the / first harbour master / in a / drawer of the old office."},
      {"50", "The lifeboat / crew / was caught / in a / [storm|squall] / while / returning from a call."},
      {"51", "A sudden / [wind|zephyr] / lifted / the tents / of the / food fair / on the esplanade."},
      {"52", "The morning / [ice|rime] / on the / slipway / made / the launch / slow and dangerous."},
      {"53", "Swimmers / braved the / cold / [sea|brine] / at the / annual / New Year's Day dip."},
      {"54", "A large / [wave|billow] / broke / over the / harbour wall / and flooded / the car park."},
      {"55", "Children / collected / shells / on the / [beach|shingle] / below / the coastguard cottages."},
      {"56", "The dredger / removed / tons of / [mud|silt] / from the / inner basin / over the winter."},
      {"57", "Climbers / were rescued / from the / [cliff|crag] / above / Gull Point / late on Sunday."},
      {"58", "Explorers / mapped a / [cave|grotto] / beneath / the headland / that only / opens at low tide."},
      {"59", "An old / [tree|rowan] / by the / harbour gate / was felled / after the / autumn gales."},
      {"60", "Volunteers / planted / [grass|marram] / on the / sand dunes / to stop them / blowing away."},
      {"61", "The orchard / behind the inn / grows / [apples|damsons] / that are / sold at / the Saturday market."},
      {"62", "The dairy / gave its / [milk|whey] / to the / pig farmers / on the / edge of town."},
      {"63", "The butcher / on Quay Street / now sells / [meat|mutton] / from / island farms / every Friday."},
      {"64", "The trawler / landed / a record / catch of / [cod|ling] / on Thursday / morning."},
      {"65", "Children / at the rock pools / found / many / [crabs|whelks] / under the / weed on the stones."},
      {"66", "The fishmonger / sharpens / his / [knife|cleaver] / on a stone / by the / back door each morning."},
      {"67", "A carpenter / used an / old / [hammer|mallet] / to fit / the new planks / of the fishing boat."},
      {"68", "The brewer / still delivers / by / [cart|dray] / to the / inns / along the waterfront."},
      {"69", "The crew / turned the / [winch|capstan] / to haul / the heavy boat / up the / shingle bank."},
      {"70", "The rower / broke an / [oar|scull] / during / the race / across / the outer harbour."},
      {"71", "The lifeboat / sounded its / [horn|klaxon] / as it / left the / harbour / for the last time."},
      {"72", "The landlord / found an / old / [bottle|flagon] / of cider / under the / cellar stairs."},
      {"73", "The winner / of the race / drank from a / silver / [cup|goblet] / on the / steps of the town hall."},
      {"74", "The coastguard / gave the / shivering swimmer / a / [blanket|plaid] / and a / flask of hot tea."},
      {"75", "The shop / by the ferry / sells / [boots|brogues] / made by / a local / shoemaker."},
      {"76", "The museum / shows a / leather / [jacket|jerkin] / worn by / a sailor / three hundred years ago."},
      {"77", "The hotel / has opened / its / [garden|parterre] / to the public / for the / summer months."},
      {"78", "Horses / grazed in / the / [field|glebe] / beside / the old / rectory wall."},
      {"79", "Walkers / stopped at / the / [pond|tarn] / above the / town / to watch the sunset."},
      {"80", "The cattle / were driven / along the / [track|drove] / to the / summer / pastures on the hill."},
      {"81", "The farmer / mended / the / [gate|stile] / on the / coastal path / after the storm."},
      {"82", "Cows / sheltered / in the / [barn|byre] / while / the gale / blew across the island."},
      {"83", "Pupils / took the / [bus|omnibus] / from the / station / to the / harbour museum."},
      {"84", "The postman / rode a / [bike|tandem] / along / the seafront / for the / charity fun day."},
      {"85", "Crowds / watched an / old / [plane|airship] / fly low / over the bay / during the air show."},
      {"86", "The keeper / sent a / [radio|wireless] / message / to the / mainland / when the boat capsized."},
      {"87", "The town / [paper|gazette] / printed / the names / of every / sailor / lost at sea."},
      {"88", "The harbour office / keeps a / [book|ledger] / of every / ship / that has / entered the port."},
      {"89", "The gallery / bought an / [image|etching] / of the / harbour / in the / year of the great storm."},
      {"90", "A band / with a / [drum|tabor] / led the / procession / down to / the fish quay."},
      {"91", "Sailors / played / [cards|whist] / in the / back room / of the inn / during the gale."},
      {"92", "The fishermen / held a / [party|ceilidh] / in the / net loft / to celebrate / the new boat."},
      {"93", "The best / boat / won a / [prize|rosette] / at the / harbour regatta / on Saturday."},
      {"94", "The rowing / [club|guild] / has / twenty / new members / since / the summer."},
      {"95", "A local / [judge|assessor] / will decide / who owns / the timber / washed up / on the beach."},
      {"96", "The keepers / kept a / [fire|brazier] / burning / on the / headland / through the night."},
      {"97", "The whole / street / smelled / of / [smoke|reek] / after the / chimney fire on Monday."},
      {"98", "The chapel / is lit / by / [candles|tapers] / during / the evening / service in winter."},
      {"99", "The islanders / still burn / [coal|peat] / to heat / their homes / through / the long winter."},
      {"100", "The new / harbour steps / are made / of / [stone|basalt] / brought / from the quarry."},
      {"101", "A collector / bought / a / [steel|pewter] / plate / found / in the harbour mud."},
      {"102", "The bakery / sells / cakes / made with / [sugar|treacle] / from / an old family recipe."},
      {"103", "The caf\u00e9 / on the quay / serves / [coffee|chicory] / with / a slice / of apple cake."},
      {"104", "The beekeeper / sells / [honey|molasses] / at the / harbour market / every / other Saturday."},
      {"105", "A painter / from the city / bought the / old / [mill|kiln] / by the / river mouth."},
      {"106", "The ship / carried / [gold|bullion] / from / the mines / to the / capital, records say."},
      {"107", "Volunteers / cleared / the / [weeds|bracken] / from the / graveyard / before the memorial."},
      {"108", "The ferry / was late / because / a / [cow|heifer] / had wandered / onto the ramp."},
      {"109", "The old / [clock|sundial] / in the / square / has been / cleaned / for the festival."},
      {"110", "The children / made a / paper / [kite|glider] / and flew it / from / the harbour wall."},
      {"111", "Fishermen / say that / a / [whale|grampus] / was seen / near / the outer buoys."},
      {"112", "The lifeguards / closed the / beach / after a / [seal|walrus] / was seen / among the swimmers."},
      {"113", "The museum / keeps / a / [diary|daybook] / written by / the first / lighthouse keeper."},
      {"114", "A diver / found a / [ring|brooch] / in the / sand / beneath / the old pier."},
      {"115", "The lighthouse / keeper / fed the / [cat|moggy] / that lives / on the rocks / below the tower."},
      {"116", "The town / brass band / will play / a / [march|galop] / at the / opening of the new quay."},
      {"117", "The harbour / master / keeps / a / [gun|musket] / from the days / of smuggling."},
      {"118", "The mayor / opened / the / new / [road|causeway] / to the island / on Friday."},
      {"119", "Fishermen / repaired / the / [pier|mole] / that shelters / the boats / from the east wind."},
      {"120", "The trawler / was towed / to the / [yard|careenage] / for / repairs to its hull."},
  };
  return items;
}

const std::vector<PassageItem>& bundled_passages() {
  static const std::vector<PassageItem> passages = {
      {"P01",
       "The harbour will close to visiting yachts for two weeks in March while divers inspect the "
       "foundations of the north wall. The harbour master said that the inspection had been planned for "
       "years, and that the mild winter gave the town a chance to do it before the busy season. Fishing "
       "boats will still be able to land their catch at the fish quay, but they must enter and leave only at "
       "high water. Owners of yachts have been asked to use the marina across the bay."},
      {"P02",
       "On Saturday morning more than two hundred people gathered on the beach below the old fort to clear "
       "the sand of plastic and rope. The youngest volunteer was four years old and the oldest was "
       "ninety-one. By noon they had filled sixty sacks, which were taken away by a council lorry. Among the "
       "strangest finds were a bicycle wheel, a plastic duck from a factory in another country and a bottle "
       "with a message written in pencil. The message asked whoever found it to write to a school on the far "
       "side of the ocean, and the children of the harbour school have promised to do so. The organisers "
       "thanked the bakery on Quay Street, which gave every helper a warm bun and a cup of tea."},
      {"P03",
       "For the first time in forty years the town has a boatyard again. Two young carpenters have taken "
       "over the empty sheds at the end of the slipway, where their grandfather built wooden fishing boats "
       "until the yard closed. They plan to repair old boats rather than build new ones, and they already "
       "have a waiting list of nine owners. The council has agreed to lower the rent for the first three "
       "years. Both carpenters learned their trade at a college on the mainland and then spent several years "
       "working in yards along the coast. They say that the smell of tar and fresh timber in the sheds "
       "reminds them of the stories their grandfather used to tell."},
      {"P04",
       "The lifeboat was called out twice on Tuesday night. The first call came just after nine, when a "
       "small motor boat lost power near the rocks at Gull Point. Its two passengers were taken aboard and "
       "the boat was towed back to the harbour. The second call came shortly before two in the morning, "
       "after a walker on the cliff path saw a light flashing far out at sea. The crew searched for three "
       "hours in heavy rain but found nothing. The coastguard believes the light came from a buoy that had "
       "broken loose in the storm. The crew returned to the station at dawn, tired but relieved."},
      {"P05",
       "The fish market will move to a new building on the east quay next spring. The old market hall, which "
       "has stood beside the harbour for more than a century, no longer meets the rules for keeping fish "
       "cold, and repairing it would have cost more than building a new hall. The new building will have a "
       "cold store, a small caf\u00e9 and a room where schools can learn about the fishing industry. Some traders "
       "are worried that fewer tourists will walk as far as the east quay, and the council has promised new "
       "signs and a path along the water. The old hall will not be pulled down. It will be used for "
       "concerts, markets and exhibitions, and the first event will be a show of photographs of the fishing "
       "fleet taken over the last hundred years."},
      {"P06",
       "A sea eagle has been seen above the cliffs north of the town for the third week in a row. "
       "Birdwatchers believe it may be a young bird from the islands to the west, where the species was "
       "brought back some years ago. Local farmers have been told that the eagle is no danger to their "
       "sheep. The bird has been photographed sitting on the ruined chapel at the top of the headland, and "
       "the picture has been printed on postcards that are now sold in every shop on the seafront."},
      {"P07",
       "The summer regatta will be held on the first Saturday of August, as it has been for the last hundred "
       "and twelve years. This year there will be races for rowing boats, sailing dinghies and, for the "
       "first time, paddle boards. Entries must reach the harbour office by the end of June. The organisers "
       "need volunteers to help with parking, to sell programmes and to sit in the safety boats. Anyone who "
       "can spare a few hours should speak to the secretary of the rowing club. The day will end with "
       "fireworks over the bay and a dance in the old net loft, where the town band will play until "
       "midnight. Last year the fireworks were cancelled because of strong winds, so the organisers have "
       "asked everyone to hope for a calm evening."},
      {"P08",
       "A letter written by a young sailor in the year of the great storm has been found inside the wall of "
       "a cottage on Rope Walk. Builders discovered it while they were replacing an old window frame. The "
       "letter is addressed to the sailor's mother and describes the night his ship was driven onto the "
       "sandbank outside the harbour. He writes that the crew spent eleven hours holding on to the rigging "
       "before a rowing boat from the town reached them. Nobody knows how the letter came to be hidden in "
       "the wall. The family who own the cottage have given it to the town museum, where it will go on "
       "display next month beside a painting of the wreck."},
      {"P09",
       "The ferry to the island will run an extra crossing every evening from the middle of June until the "
       "end of August. The ferry company said that the number of passengers had grown every year since the "
       "new pier was built. Islanders have welcomed the change, because the last boat of the day now leaves "
       "the town after the shops close. Walkers and cyclists are reminded that the island has no public "
       "transport, and that bicycles must be booked in advance. Dogs are welcome on the ferry but must be "
       "kept on a lead on the open deck."},
      {"P10",
       "Work on the new sea wall at the western end of the promenade began last week. The old wall was badly "
       "damaged in the winter storms, and on several nights the sea came over it and flooded the gardens of "
       "the houses behind. The new wall will be a metre higher than the old one and will have steps down to "
       "the beach every hundred metres. While the work goes on, the promenade will be closed between the "
       "bandstand and the swimming pool. The work is planned to finish before the summer holidays, but the "
       "engineers have warned that a stormy spring could delay it by several weeks."},
      {"P11",
       "Pupils at the harbour school have spent the past year writing a history of their street. They "
       "interviewed their grandparents and neighbours, searched the museum's archive and copied old "
       "photographs lent by families who have lived in the town for generations. They learned that the "
       "street was once home to rope makers, sail makers and a blacksmith who made anchors for the fishing "
       "fleet. One pupil found that her own house had been a small inn where sailors waited for their ships. "
       "The book they have written will be printed by the town press and sold in the bookshop on the square, "
       "and every penny from its sale will go towards a new roof for the school's boat shed. The headteacher "
       "said she had never seen pupils so keen to spend their breaks in a library."},
      {"P12",
       "The town's oldest fisherman celebrated his hundredth birthday on Sunday with a party in the lifeboat "
       "station. He first went to sea at the age of fourteen, on a sailing boat that belonged to his uncle, "
       "and he fished the waters around the islands for more than sixty years. He still walks down to the "
       "harbour every morning to see what the boats have landed and to tell the young crews where the fish "
       "were in his day. Guests at the party included his four children, eleven grandchildren and nineteen "
       "great-grandchildren. The lifeboat crew presented him with a painting of the boat he owned for most "
       "of his working life, and the town band played the songs he asked for. When asked for the secret of "
       "his long life, he said that it was fresh air, hard work and never going to sea on a Friday."},
  };
  return passages;
}

}  // namespace gazemill::sim
