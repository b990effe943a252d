"""An independent implementation of gazemill's reading-time measures.

Written from the published definitions and from the prose specification in
the header comment of measures/reading_measures.h, without reading any
implementation of the measures in this repository, so that the test suite can
compare the two row by row (tests/python/check_measures_oracle.py).

Sources named beside each definition:
  [R98]  Rayner, K. (1998). Eye movements in reading and information
         processing: 20 years of research. Psychological Bulletin, 124(3),
         372-422: its account of the measures of processing time.
  [LPP98] Liversedge, S. P., Paterson, K. B., & Pickering, M. J. (1998). Eye
         movements and measures of reading time. In G. Underwood (Ed.), Eye
         guidance in reading and scene perception (pp. 55-75). Elsevier.
  [SPEC] the header comment of measures/reading_measures.h (our conventions:
         which value is NA when, how runs and off-region fixations count).
  [M8]   ../shared/reference/methods.md section 8, which summarises the two
         papers and marks what was read ([SEEN]) and what is recalled
         ([MEMORY]). Neither chapter's text was at hand while writing this:
         what is attributed to R98 or LPP98 beyond methods.md's [SEEN] rows
         is from memory.

Conventions used throughout:
  * Regions are numbered 0..region_count-1 in reading order; a fixation's
    region -1 means off the regions. "Further on" means a larger region
    number (reading order, not screen x: [M8] edge convention 4).
  * NA is None. Booleans are True/False.
Decisions taken where the prose leaves room are marked DECISION.
"""
import math
from collections import namedtuple

Fixation = namedtuple("Fixation", "duration_ms x_px y_px x_deg y_deg line region landing_chars")

# Every measure of one region, in the order of RegionMeasures (the region
# number itself is the row key, not a measure).
MEASURES = (
    "fixated", "skipped",
    "first_fixation_ms", "single_fixation_ms", "gaze_duration_ms", "go_past_ms", "selective_go_past_ms",
    "total_time_ms", "rereading_ms", "second_pass_ms",
    "first_pass_fixations", "total_fixations",
    "regression_out", "regression_in",
    "landing_chars", "incoming_saccade_chars", "incoming_saccade_deg",
)
DURATION_MEASURES = (
    "first_fixation_ms", "single_fixation_ms", "gaze_duration_ms", "go_past_ms", "selective_go_past_ms",
    "total_time_ms", "rereading_ms", "second_pass_ms",
)


def fixations_from_pairs(pairs):
    """(region, duration_ms) pairs -> fixations with placeholder positions
    (all on line 0, landing position unknown)."""
    return [Fixation(d, 0.0, 0.0, 0.0, 0.0, 0, r, None) for r, d in pairs]


def runs_on(fixations, region):
    """The runs on a region: maximal stretches of consecutive fixations on it,
    as lists of indices. A fixation anywhere else, off the regions included,
    ends a run [SPEC: "A run is a stretch of consecutive fixations on the
    region"; M8 edge convention 3: off-region fixations end a run]."""
    runs, current = [], []
    for k, f in enumerate(fixations):
        if f.region == region:
            current.append(k)
        elif current:
            runs.append(current)
            current = []
    if current:
        runs.append(current)
    return runs


def previous_on_a_region(fixations, k):
    """The region of the last fixation before index k that lies on a region
    (off-region fixations left out), or None when there is none."""
    for j in range(k - 1, -1, -1):
        if fixations[j].region >= 0:
            return fixations[j].region
    return None


def region_measures(fixations, region_count, char_width_px):
    """A list of dicts, one per region 0..region_count-1, with every MEASURE."""
    return [measures_of_region(fixations, r, char_width_px) for r in range(region_count)]


def measures_of_region(fix, r, char_width_px):
    n = len(fix)
    on_r = [k for k in range(n) if fix[k].region == r]
    runs = runs_on(fix, r)
    m = dict.fromkeys(MEASURES)
    m["fixated"] = bool(on_r)
    m["total_fixations"] = len(on_r)

    # Entered in first pass: the region's first fixation comes before any
    # fixation on a region further on. Otherwise the region was skipped in
    # first pass, never-fixated regions included [R98, from memory:
    # first-pass measures count only fixations made before the eyes moved
    # past the region; M8 (SEEN: PMC6688130 Table 4); SPEC "skipped"].
    entered = bool(on_r) and all(fix[k].region <= r for k in range(on_r[0]))
    m["skipped"] = not entered

    # Any-pass measures: missing when the region was never fixated [SPEC].
    if on_r:
        # Total reading time: all fixations on the region, any pass [R98, LPP98 (from memory);
        # M8 "total dwell time" (SEEN)].
        m["total_time_ms"] = sum(fix[k].duration_ms for k in on_r)
        # Regression in: some run began right after a fixation on a region
        # further on, off-region fixations between them left out [SPEC;
        # M8 "Regression-in: region entered from a region to its right"].
        # A region's first-pass run can never qualify (nothing further on
        # came before it), so only later runs, or any run of a region
        # skipped in first pass, can.
        came_from = [previous_on_a_region(fix, run[0]) for run in runs]
        m["regression_in"] = any(c is not None and c > r for c in came_from)

    if entered:
        first = on_r[0]
        first_run = runs[0]  # the first run starts at the first fixation
        assert first_run[0] == first
        after_run = first_run[-1] + 1
        # First fixation duration: the first first-pass fixation [R98, LPP98 (from memory); M8 FFD (SEEN)].
        m["first_fixation_ms"] = fix[first].duration_ms
        # Single fixation duration: FFD when the first-pass run has exactly one fixation [R98 (from memory); M8 SFD].
        m["single_fixation_ms"] = fix[first].duration_ms if len(first_run) == 1 else None
        # Gaze duration / first-pass reading time: the first-pass run, which
        # ends when the eyes first leave the region for another region or for
        # no region at all [R98, LPP98 (from memory); M8 "dwell time of the first run" (SEEN); SPEC].
        m["gaze_duration_ms"] = sum(fix[k].duration_ms for k in first_run)
        m["first_pass_fixations"] = len(first_run)

        # Go-past / regression-path time: every fixation from entering the
        # region until the first fixation on a region further on, fixations
        # on earlier regions and off the regions included; to the end of the
        # trial when the eyes never pass the region [LPP98 (regression-path
        # time; from memory); M8 go-past (SEEN: Sci Data table) and edge
        # convention 1; SPEC].
        end = next((k for k in range(first, n) if fix[k].region > r), n)
        span = range(first, end)
        m["go_past_ms"] = sum(fix[k].duration_ms for k in span)
        # Selective go-past (right-bounded time in LPP98's terms; from
        # memory): the same span, only the fixations on the region itself [M8; SPEC].
        m["selective_go_past_ms"] = sum(fix[k].duration_ms for k in span if fix[k].region == r)

        # Regression out (first-pass regression): the first fixation on a
        # region after the first-pass run lies on an earlier region; false
        # when a later region or nothing follows [M8 (SEEN: Sci Data "times
        # exited to earlier parts"); R98 first-pass regressions (from memory); SPEC].
        # DECISION: off-region fixations are passed over (SPEC says "on a
        # region"). When the first fixation on a region after the run is on
        # this same region (the run ended with an excursion off the regions
        # and came back), the eyes did not go to an earlier region: false.
        # The SPEC lists only "a later region or nothing" for false; this case
        # is neither, and is reported to the lead.
        nxt = next((fix[k].region for k in range(after_run, n) if fix[k].region >= 0), None)
        m["regression_out"] = nxt is not None and nxt < r

        # Landing position: of the first first-pass fixation, as the mapper
        # gave it (characters from the region's first letter) [R98 landing
        # positions (from memory); SPEC]. NA when the mapper gave none.
        m["landing_chars"] = fix[first].landing_chars
        # Incoming saccade: from the fixation just before the first
        # first-pass fixation (whatever it lay on, off-region included),
        # missing for the trial's first fixation [SPEC].
        if first > 0:
            prev, here = fix[first - 1], fix[first]
            # Signed, in characters, only when both fixations are on one line
            # [SPEC; R98 (from memory): saccade length is measured in
            # character spaces; methods.md section 7 (SEEN): saccades of 7-9
            # character spaces].
            # DECISION: a fixation with line -1 (no line) is on no line, so
            # never "on one line" with another.
            if prev.line == here.line and here.line >= 0:
                m["incoming_saccade_chars"] = (here.x_px - prev.x_px) / char_width_px
            # DECISION: amplitude is the Euclidean distance between the two
            # positions in degrees (common practice, no source), and it is
            # given across lines too: the one-line condition belongs to the
            # character count, which has no meaning across lines. Reported.
            m["incoming_saccade_deg"] = math.hypot(here.x_deg - prev.x_deg, here.y_deg - prev.y_deg)
    else:
        m["first_pass_fixations"] = 0  # a count is 0 when nothing happened [SPEC]

    if on_r:
        # Rereading: all fixations on the region outside its first-pass run
        # [SPEC; M8 "TFT - GD" (MEMORY)]. For a region skipped in first pass
        # that is all of them.
        gd = m["gaze_duration_ms"] if entered else 0.0
        outside = [k for k in on_r if not (entered and k in runs[0])]
        m["rereading_ms"] = sum(fix[k].duration_ms for k in outside)
        assert math.isclose(m["rereading_ms"], m["total_time_ms"] - gd, abs_tol=1e-6)
        # Second pass: the first run after the first pass: the second run of a
        # region entered in first pass (0 when there is none), or the first
        # run of a region skipped in first pass [SPEC]. Where a paper's
        # "second-pass time" means all later fixations (M8: "TFT - GD"), that
        # is rereading_ms here; the two differ from a third visit on.
        later = runs[1:] if entered else runs
        m["second_pass_ms"] = sum(fix[k].duration_ms for k in later[0]) if later else 0.0
    return m


# ---------------------------------------------------------------------------
# Aggregates per design cell (to be compared with the C++ aggregates later).

def aggregate(rows, by=("role", "cell")):
    """Per group of rows (dicts with participant, trial, item, region, role,
    cell and the MEASURES), for each duration measure: the mean, the sample SD
    (n - 1 in the denominator; NA when n < 2) and N, leaving NA values out;
    and two proportions with their denominators:
      skipping_p = skipped rows / all rows of the group (never-fixated rows
        count as skipped) [M8 skipping probability, SEEN: Sci Data table];
      regression_out_p = rows with a first-pass regression out / rows entered
        in first pass [M8: conditional on first-pass fixation; probability
        form MEMORY; R98 first-pass regressions, from memory].
    The mean and SD are the textbook formulas (common practice, no source).
    Returns {group key tuple: {name: value}}; empty proportions are NA."""
    groups = {}
    for row in rows:
        groups.setdefault(tuple(row[k] for k in by), []).append(row)
    result = {}
    for key, members in sorted(groups.items()):
        out = {}
        for name in DURATION_MEASURES:
            values = [row[name] for row in members if row[name] is not None]
            n = len(values)
            mean = sum(values) / n if n else None
            sd = math.sqrt(sum((v - mean) ** 2 for v in values) / (n - 1)) if n >= 2 else None
            out[name + "_mean"], out[name + "_sd"], out[name + "_n"] = mean, sd, n
        out["skipping_n"] = len(members)
        skipped = sum(1 for row in members if row["skipped"])
        out["skipping_p"] = skipped / len(members)
        entered = [row for row in members if not row["skipped"]]
        out["regression_out_n"] = len(entered)
        out["regression_out_p"] = (sum(1 for row in entered if row["regression_out"]) / len(entered)) if entered else None
        result[key] = out
    return result
