// gazemill study report: builds a Vega specification for every chart from
// the page's embedded data, renders them as SVG, and runs the trial viewer.
// Nothing is fetched: the data are in the script element "gazemill-data", the
// libraries in the script before this one.
(function () {
  "use strict";

  // --- Vega, assembled from Debian's module files as Vega's own index does ---------------
  var vega = (function () {
    var r = globalThis.gzmRequire, v = {};
    ["vega-util", "vega-statistics", "vega-time", "vega-scale", "vega-format", "vega-loader", "vega-dataflow", "vega-scenegraph",
      "vega-expression", "vega-functions", "vega-runtime", "vega-view", "vega-parser"].forEach(function (n) { Object.assign(v, r(n)); });
    var transforms = r("vega-dataflow").transforms;
    ["vega-transforms", "vega-view-transforms", "vega-encode"].forEach(function (n) { Object.assign(transforms, r(n)); });
    return v;
  })();

  // Okabe & Ito (2008): distinct under the common colour-vision deficiencies.
  var OKABE_ITO = ["#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#F0E442", "#000000"];
  var BLUE = "#0072B2", ORANGE = "#E69F00", GREEN = "#009E73", SKY = "#56B4E9", VERMILLION = "#D55E00", PURPLE = "#CC79A7", GREY = "#8a8f96";
  vega.scheme("gzmokabeito", OKABE_ITO);

  var FONT = "system-ui, -apple-system, 'Segoe UI', 'DejaVu Sans', 'Liberation Sans', Arial, sans-serif";
  var MONO = "'DejaVu Sans Mono', 'Liberation Mono', Menlo, Consolas, monospace";
  var CONFIG = {
    background: null,
    font: FONT,
    padding: 4,
    axis: { labelColor: "#3b434d", titleColor: "#1d232b", domainColor: "#8a8f96", tickColor: "#8a8f96", gridColor: "#ebe8e1",
      labelFontSize: 11, titleFontSize: 12, titleFontWeight: 600, labelFont: FONT, titleFont: FONT },
    legend: { labelFontSize: 11, titleFontSize: 12, titleFontWeight: 600, labelColor: "#3b434d", titleColor: "#1d232b", labelLimit: 260 },
    title: { fontSize: 13, fontWeight: 600, color: "#1d232b", anchor: "start", font: FONT },
    text: { font: FONT, fill: "#1d232b" },
    range: { category: OKABE_ITO }
  };

  var timings = { script_start: performance.now() };
  var data = JSON.parse(document.getElementById("gazemill-data").textContent);
  timings.data_parsed = performance.now();
  var views = {};

  // --- helpers ------------------------------------------------------------------------------

  // Every chart's width is read once, before any is drawn: reading a width after
  // the page has changed makes the browser lay the whole page out again.
  var containerWidths = new Map();
  function widthOfContainer(el) {
    if (!containerWidths.has(el)) containerWidths.set(el, el.clientWidth);
    return containerWidths.get(el);
  }

  function widthOf(el, fallback) {
    var w = widthOfContainer(el) || fallback || 700;
    return Math.max(260, Math.floor(w) - 90);
  }
  function cellLabel(c) { return c ? c : "all cells"; }
  function roleLabel(r) { return r ? r : "other regions"; }
  // "target: frequent/valid" for role target in cell "frequency=frequent, preview=valid"
  // (the colour legend names the factors).
  function groupLabel(role, cell) {
    var levels = String(cell).split(", ").map(function (p) { var i = p.indexOf("="); return i < 0 ? p : p.slice(i + 1); });
    return roleLabel(role) + ": " + levels.join("/");
  }
  function histogramRows(h) {
    var rows = [];
    if (!h || !h.counts) return rows;
    for (var i = 0; i < h.counts.length; ++i) rows.push({ x0: h.first + i * h.width, x1: h.first + (i + 1) * h.width, count: h.counts[i] });
    return rows;
  }
  function emptySpec(el, message) {
    return {
      width: widthOf(el), height: 40,
      marks: [{ type: "text", encode: { enter: { x: { value: 0 }, y: { value: 20 }, text: { value: message }, fill: { value: "#5b6470" }, fontSize: { value: 13 } } } }]
    };
  }
  function cellColours(cells) {
    // "all cells" in black, the cells in the palette's order.
    var domain = ["all cells"].concat(cells), range = ["#1d232b"];
    for (var i = 0; i < cells.length; ++i) range.push(OKABE_ITO[i % 7]);
    return { name: "cellcolour", type: "ordinal", domain: domain, range: range };
  }
  var cells = (data.run && data.run.cells) || [];

  // --- the charts ------------------------------------------------------------------------------

  var builders = {};

  builders["run-trials"] = function (el) {
    var rows = [];
    (data.run.trials || []).forEach(function (t) {
      rows.push({ participant: t.participant, status: "kept", order: 0, n: t.kept });
      rows.push({ participant: t.participant, status: "excluded by cleaning", order: 1, n: t.excluded });
    });
    if (!rows.length) return emptySpec(el, "No trials in the store.");
    return {
      width: widthOf(el), height: 160,
      data: [{ name: "t", values: rows, transform: [{ type: "stack", groupby: ["participant"], field: "n", sort: { field: "order" } }] }],
      scales: [
        { name: "x", type: "band", domain: { data: "t", field: "participant", sort: true }, range: "width", padding: rows.length < 20 ? 0.5 : 0.2 },
        { name: "y", type: "linear", domain: { data: "t", field: "y1" }, range: "height", nice: true },
        { name: "c", type: "ordinal", domain: ["kept", "excluded by cleaning"], range: [BLUE, VERMILLION] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "participant", labelAngle: -45, labelAlign: "right", labelOverlap: true },
        { orient: "left", scale: "y", title: "trials", grid: true, tickCount: 5 }
      ],
      legends: [{ fill: "c", orient: "top", direction: "horizontal" }],
      marks: [{
        type: "rect", from: { data: "t" },
        encode: { update: {
          x: { scale: "x", field: "participant" }, width: { scale: "x", band: 1 },
          y: { scale: "y", field: "y0" }, y2: { scale: "y", field: "y1" }, fill: { scale: "c", field: "status" },
          tooltip: { signal: "datum.participant + ': ' + datum.n + ' ' + datum.status" } } }
      }]
    };
  };

  builders["quality-missing"] = function (el) {
    var rows = data.quality || [];
    return {
      width: widthOf(el), height: 190,
      data: [{ name: "q", values: rows }],
      scales: [
        { name: "x", type: "band", domain: { data: "q", field: "participant", sort: true }, range: "width", padding: rows.length < 10 ? 0.5 : 0.25 },
        { name: "y", type: "linear", domain: { fields: [{ data: "q", field: "trial_missing" }, { data: "q", field: "missing" }] }, range: "height", nice: true, zero: true },
        { name: "c", type: "ordinal", domain: ["inside trials", "whole recording"], range: [SKY, "#1d232b"] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "participant", labelAngle: -45, labelAlign: "right", labelOverlap: true },
        { orient: "left", scale: "y", title: "samples without gaze", format: ".1%", grid: true, tickCount: 5 }
      ],
      legends: [{ fill: "c", orient: "top", direction: "horizontal", symbolType: "square" }],
      marks: [
        { type: "rect", from: { data: "q" }, encode: { update: {
          x: { scale: "x", field: "participant" }, width: { scale: "x", band: 1 }, y: { scale: "y", field: "trial_missing" }, y2: { scale: "y", value: 0 },
          fill: { value: SKY }, tooltip: { signal: "datum.participant + ': ' + format(datum.trial_missing, '.2%') + ' inside trials, ' + format(datum.missing, '.2%') + ' over the whole recording'" } } } },
        { type: "rect", from: { data: "q" }, encode: { update: {
          x: { scale: "x", field: "participant" }, width: { scale: "x", band: 1 }, yc: { scale: "y", field: "missing" }, height: { value: 2.5 },
          fill: { value: "#1d232b" } } } }
      ]
    };
  };

  builders["quality-precision"] = function (el) {
    var rows = (data.quality || []).filter(function (d) { return d.rms !== null; });
    if (!rows.length) return emptySpec(el, "No fixations to measure precision in (detection has not run).");
    return {
      width: widthOf(el), height: 200,
      data: [{ name: "q", values: rows }],
      scales: [
        { name: "x", type: "point", domain: { data: "q", field: "participant", sort: true }, range: "width", padding: 0.6 },
        { name: "y", type: "linear", domain: { fields: [{ data: "q", field: "rms_q3" }, { data: "q", field: "std" }, { data: "q", field: "rms_q1" }] },
          range: "height", nice: true, zero: true },
        { name: "c", type: "ordinal", domain: ["RMS-S2S, median and quartiles", "STD, median"], range: [BLUE, ORANGE] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "participant", labelAngle: -45, labelAlign: "right", labelOverlap: true },
        { orient: "left", scale: "y", title: "degrees", grid: true, tickCount: 5 }
      ],
      legends: [{ stroke: "c", orient: "top", direction: "horizontal", symbolType: "circle" }],
      marks: [
        { type: "rule", from: { data: "q" }, encode: { update: { x: { scale: "x", field: "participant" }, y: { scale: "y", field: "rms_q1" },
          y2: { scale: "y", field: "rms_q3" }, stroke: { value: BLUE }, strokeWidth: { value: 2 } } } },
        { type: "symbol", from: { data: "q" }, encode: { update: { x: { scale: "x", field: "participant" }, y: { scale: "y", field: "rms" },
          fill: { value: BLUE }, size: { value: 50 },
          tooltip: { signal: "datum.participant + ': RMS-S2S ' + format(datum.rms, '.3f') + ' deg (quartiles ' + format(datum.rms_q1, '.3f') + '–' + format(datum.rms_q3, '.3f') + '), STD ' + format(datum.std, '.3f') + ' deg, over ' + datum.fixations + ' fixations'" } } } },
        { type: "symbol", from: { data: "q" }, encode: { update: { x: { scale: "x", field: "participant" }, y: { scale: "y", field: "std" },
          stroke: { value: ORANGE }, strokeWidth: { value: 1.6 }, fill: { value: null }, size: { value: 60 } } } }
      ]
    };
  };

  var LEVEL_ORDER = ["sample", "fixation", "trial", "participant"];
  var LEVEL_NAME = { sample: "samples", fixation: "fixations", trial: "trials", participant: "participants" };

  builders["cleaning-flow"] = function (el) {
    var c = data.cleaning;
    if (!c.present || !c.rules.length) return emptySpec(el, "No cleaning rules: nothing was removed.");
    var rows = [];
    var groups = {};
    c.flow.forEach(function (f) {
      var key = f.level + "|" + f.cell;
      if (!groups[key]) {
        groups[key] = true;
        rows.push({ level: LEVEL_NAME[f.level], order: LEVEL_ORDER.indexOf(f.level), cell: cellLabel(f.cell), step: "in", share: 1, rule: "input", n: f.input });
      }
      rows.push({ level: LEVEL_NAME[f.level], order: LEVEL_ORDER.indexOf(f.level), cell: cellLabel(f.cell), step: String(f.rule + 1),
        share: f.input ? f.remaining / f.input : 1, rule: (f.rule + 1) + ". " + c.rules[f.rule].name, n: f.remaining });
    });
    var steps = ["in"].concat(c.rules.map(function (r, i) { return String(i + 1); }));
    var total = widthOfContainer(el) || 900;
    var columns = total > 900 ? 4 : 2;
    var w = Math.floor((total - (cells.length ? 170 : 0) - columns * 60 - (columns - 1) * 30) / columns);
    return {
      data: [{ name: "flow", values: rows }],
      scales: [cellColours(cells)],
      autosize: "pad",
      layout: { columns: columns, padding: { column: 30, row: 30 }, bounds: "full" },
      legends: cells.length ? [{ stroke: "cellcolour", title: "design cell", orient: "right", symbolType: "stroke" }] : [],
      marks: [{
        type: "group",
        from: { facet: { name: "f", data: "flow", groupby: "level", aggregate: { fields: ["order"], ops: ["min"], as: ["order"] } } },
        sort: { field: "datum.order" },
        title: { text: { signal: "parent.level" }, fontSize: 12 },
        encode: { update: { width: { value: w }, height: { value: 150 } } },
        scales: [
          { name: "x", type: "point", domain: steps, range: [0, w], padding: 0.3 },
          { name: "y", type: "linear", domain: { data: "f", field: "share" }, range: [150, 0], nice: true, zero: false }
        ],
        axes: [
          { orient: "bottom", scale: "x", title: "after rule", labelOverlap: true },
          { orient: "left", scale: "y", format: ".0%", grid: true, tickCount: 4, title: "left" }
        ],
        marks: [{
          type: "group", from: { facet: { name: "series", data: "f", groupby: "cell" } },
          marks: [
            { type: "line", from: { data: "series" }, encode: { update: {
              x: { scale: "x", field: "step" }, y: { scale: "y", field: "share" }, interpolate: { value: "step-after" },
              stroke: { scale: "cellcolour", field: "cell" }, strokeWidth: { signal: "datum.cell == 'all cells' ? 2.4 : 1.4" } } } },
            { type: "symbol", from: { data: "series" }, encode: { update: {
              x: { scale: "x", field: "step" }, y: { scale: "y", field: "share" }, size: { value: 22 }, fill: { scale: "cellcolour", field: "cell" },
              tooltip: { signal: "datum.cell + ', ' + datum.rule + ': ' + format(datum.n, ',') + ' ' + datum.level + ' left (' + format(datum.share, '.2%') + ')'" } } } }
          ]
        }]
      }]
    };
  };

  function levelsPresent(c) {
    var seen = {};
    c.flow.forEach(function (f) { seen[f.level] = true; });
    return LEVEL_ORDER.filter(function (l) { return seen[l]; });
  }

  builders["cleaning-rules"] = function (el) {
    var c = data.cleaning;
    if (!c.present || !c.rules.length) return emptySpec(el, "No cleaning rules: nothing was removed.");
    var rows = c.flow.map(function (f) {
      return { level: f.level, cell: cellLabel(f.cell), all: f.cell === "", rule: (f.rule + 1) + ". " + c.rules[f.rule].name, order: f.rule,
        seq: f.input ? f.seq / f.input : 0, alone: f.input ? f.alone / f.input : 0, n: f.seq, n_alone: f.alone, input: f.input };
    });
    var levels = levelsPresent(c);
    return {
      width: widthOf(el) - 140, height: Math.max(60, 26 * c.rules.length),
      signals: [{ name: "level", value: levels.indexOf("fixation") >= 0 ? "fixation" : levels[0],
        bind: { input: "select", options: levels, name: "level " } }],
      data: [
        { name: "r", values: rows },
        { name: "shown", source: "r", transform: [{ type: "filter", expr: "datum.level == level" }] },
        { name: "all", source: "shown", transform: [{ type: "filter", expr: "datum.all" }] },
        { name: "cells", source: "shown", transform: [{ type: "filter", expr: "!datum.all" }] }
      ],
      scales: [
        { name: "y", type: "band", domain: { data: "r", field: "rule", sort: { field: "order", op: "min" } }, range: "height", padding: 0.3 },
        { name: "x", type: "linear", domain: { fields: [{ data: "shown", field: "seq" }, { data: "shown", field: "alone" }] }, domainMin: 0, range: "width", nice: true, zero: true },
        cellColours(cells)
      ],
      axes: [
        { orient: "left", scale: "y", labelLimit: 240 },
        { orient: "bottom", scale: "x", format: ".1%", grid: true, title: { signal: "'share of the ' + level + 's removed'" }, tickCount: 5 }
      ],
      legends: cells.length ? [{ fill: "cellcolour", title: "design cell", orient: "right", values: cells }] : [],
      marks: [
        { type: "rect", from: { data: "all" }, encode: { update: {
          y: { scale: "y", field: "rule" }, height: { scale: "y", band: 1 }, x: { scale: "x", value: 0 }, x2: { scale: "x", field: "seq" },
          fill: { value: "#c9d9e8" },
          tooltip: { signal: "datum.rule + ': ' + format(datum.n, ',') + ' of ' + format(datum.input, ',') + ' ' + level + 's first (' + format(datum.seq, '.2%') + '), ' + format(datum.n_alone, ',') + ' alone'" } } } },
        { type: "rect", from: { data: "all" }, encode: { update: {
          y: { scale: "y", field: "rule" }, height: { scale: "y", band: 1 }, xc: { scale: "x", field: "alone" }, width: { value: 2.5 }, fill: { value: "#1d232b" } } } },
        { type: "symbol", from: { data: "cells" }, encode: { update: {
          y: { scale: "y", field: "rule", band: 0.5 }, x: { scale: "x", field: "seq" }, fill: { scale: "cellcolour", field: "cell" }, size: { value: 46 },
          stroke: { value: "#ffffff" }, strokeWidth: { value: 0.8 },
          tooltip: { signal: "datum.rule + ', ' + datum.cell + ': ' + format(datum.n, ',') + ' of ' + format(datum.input, ',') + ' (' + format(datum.seq, '.2%') + ')'" } } } }
      ]
    };
  };

  builders["cleaning-who"] = function (el) {
    var c = data.cleaning;
    if (!c.present || !c.rules.length) return emptySpec(el, "No cleaning rules: nothing was removed.");
    var rows = c.participants.filter(function (p) { return p.level !== "participant"; }).map(function (p) {
      return { participant: p.participant, level: p.level, rule: (p.rule + 1) + ". " + c.rules[p.rule].name, order: p.rule,
        share: p.input ? p.removed / p.input : 0, removed: p.removed, input: p.input };
    });
    var levels = levelsPresent(c).filter(function (l) { return l !== "participant"; });
    if (!rows.length) return emptySpec(el, "No participant lost anything to the rules.");
    return {
      width: widthOf(el) - 160, height: Math.max(60, 22 * c.rules.length),
      signals: [{ name: "level", value: levels.indexOf("fixation") >= 0 ? "fixation" : levels[0], bind: { input: "select", options: levels, name: "level " } }],
      data: [
        { name: "p", values: rows },
        { name: "shown", source: "p", transform: [{ type: "filter", expr: "datum.level == level" }] }
      ],
      scales: [
        { name: "x", type: "band", domain: { data: "p", field: "participant", sort: true }, range: "width", padding: 0.04 },
        { name: "y", type: "band", domain: { data: "p", field: "rule", sort: { field: "order", op: "min" } }, range: "height", padding: 0.04 },
        { name: "shade", type: "linear", domain: { data: "shown", field: "share" }, domainMin: 0, range: { scheme: "blues" }, zero: true, nice: true }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "participant", labelAngle: -45, labelAlign: "right", labelOverlap: true },
        { orient: "left", scale: "y", labelLimit: 240 }
      ],
      legends: [{ fill: "shade", title: "share removed", format: ".0%", orient: "right", gradientLength: 120 }],
      marks: [{ type: "rect", from: { data: "shown" }, encode: { update: {
        x: { scale: "x", field: "participant" }, width: { scale: "x", band: 1 }, y: { scale: "y", field: "rule" }, height: { scale: "y", band: 1 },
        fill: { signal: "datum.removed > 0 ? scale('shade', datum.share) : '#f4f2ee'" },
        tooltip: { signal: "datum.participant + ', ' + datum.rule + ': ' + format(datum.removed, ',') + ' of ' + format(datum.input, ',') + ' ' + level + 's (' + format(datum.share, '.1%') + ')'" } } } }]
    };
  };

  function histogramSpec(el, main, overlay, xTitle, names) {
    var rows = histogramRows(main), over = histogramRows(overlay);
    var hasOver = over.some(function (r) { return r.count > 0; });
    var legendDomain = hasOver ? names : [names[0]];
    return {
      width: widthOf(el), height: 190,
      data: [{ name: "h", values: rows }, { name: "o", values: over.map(function (r) { return { x: (r.x0 + r.x1) / 2, count: r.count }; }) }],
      scales: [
        { name: "x", type: "linear", domain: [rows.length ? rows[0].x0 : 0, rows.length ? rows[rows.length - 1].x1 : 1], range: "width", zero: false },
        { name: "y", type: "linear", domain: { fields: [{ data: "h", field: "count" }, { data: "o", field: "count" }] }, range: "height", nice: true, zero: true },
        { name: "c", type: "ordinal", domain: legendDomain, range: [SKY, BLUE] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: xTitle, tickCount: 10 },
        { orient: "left", scale: "y", title: "count", grid: true, tickCount: 5, format: "~s" }
      ],
      legends: [{ fill: "c", orient: "top", direction: "horizontal" }],
      marks: [
        { type: "rect", from: { data: "h" }, encode: { update: {
          x: { scale: "x", field: "x0", offset: 0.5 }, x2: { scale: "x", field: "x1", offset: -0.5 }, y: { scale: "y", field: "count" }, y2: { scale: "y", value: 0 },
          fill: { value: SKY }, tooltip: { signal: "format(datum.x0, '.4~f') + '–' + format(datum.x1, '.4~f') + ': ' + format(datum.count, ',')" } } } },
        { type: "line", from: { data: "o" }, encode: { update: {
          x: { scale: "x", field: "x" }, y: { scale: "y", field: "count" }, stroke: { value: BLUE }, strokeWidth: { value: 2 },
          opacity: { value: hasOver ? 1 : 0 } } } }
      ]
    };
  }

  builders["detection-fixations"] = function (el) {
    var d = data.detection;
    return histogramSpec(el, d.fixation_ms, d.kept_fixation_ms, "fixation duration (ms)", ["detected", "kept after cleaning"]);
  };
  builders["detection-amplitudes"] = function (el) {
    return histogramSpec(el, data.detection.amplitude_deg, null, "saccade amplitude (deg)", ["detected"]);
  };

  builders["detection-main-sequence"] = function (el) {
    var d = data.detection, m = d.main_sequence, cellsRows = [];
    for (var i = 0; i < m.x_bins; ++i) {
      for (var j = 0; j < m.y_bins; ++j) {
        var n = m.counts[i * m.y_bins + j];
        if (n > 0) cellsRows.push({ a0: m.x_first + i * m.x_width, a1: m.x_first + (i + 1) * m.x_width, v0: m.y_first + j * m.y_width, v1: m.y_first + (j + 1) * m.y_width, n: n });
      }
    }
    var ref = d.reference, band = [];
    for (var k = 0; k < ref.amplitude.length; ++k) band.push({ a: ref.amplitude[k], lo: ref.low[k], hi: ref.high[k] });
    var xmax = m.x_first + m.x_bins * m.x_width, ymax = m.y_first + m.y_bins * m.y_width;
    return {
      width: widthOf(el) - 60, height: 260,
      data: [{ name: "cells", values: cellsRows }, { name: "band", values: band }],
      scales: [
        { name: "x", type: "linear", domain: [0, xmax], range: "width" },
        { name: "y", type: "linear", domain: [0, ymax], range: "height" },
        { name: "shade", type: "log", domain: { data: "cells", field: "n" }, range: { scheme: "viridis" }, reverse: true },
        { name: "c", type: "ordinal", domain: ["main sequence, Vmax " + ref.v_max_low + "–" + ref.v_max_high + " deg/s"], range: [ORANGE] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "amplitude (deg)", tickCount: 8 },
        { orient: "left", scale: "y", title: "peak velocity (deg/s)", grid: true, tickCount: 6 }
      ],
      legends: [{ fill: "shade", title: "saccades", orient: "right", gradientLength: 140, format: "~s" }, { stroke: "c", orient: "top-left", symbolType: "stroke" }],
      marks: [
        { type: "rect", from: { data: "cells" }, encode: { update: {
          x: { scale: "x", field: "a0" }, x2: { scale: "x", field: "a1" }, y: { scale: "y", field: "v1" }, y2: { scale: "y", field: "v0" },
          fill: { scale: "shade", field: "n" },
          tooltip: { signal: "format(datum.a0, '.2f') + '–' + format(datum.a1, '.2f') + ' deg, ' + format(datum.v0, '.0f') + '–' + format(datum.v1, '.0f') + ' deg/s: ' + datum.n" } } } },
        { type: "area", from: { data: "band" }, encode: { update: {
          x: { scale: "x", field: "a" }, y: { scale: "y", field: "lo" }, y2: { scale: "y", field: "hi" }, fill: { value: ORANGE }, fillOpacity: { value: 0.22 } } } },
        { type: "line", from: { data: "band" }, encode: { update: { x: { scale: "x", field: "a" }, y: { scale: "y", field: "lo" }, stroke: { value: ORANGE }, strokeWidth: { value: 1.5 } } } },
        { type: "line", from: { data: "band" }, encode: { update: { x: { scale: "x", field: "a" }, y: { scale: "y", field: "hi" }, stroke: { value: ORANGE }, strokeWidth: { value: 1.5 } } } }
      ]
    };
  };

  builders["detection-outliers"] = function (el) {
    var d = data.detection, names = ["fixations per trial", "median fixation", "median amplitude", "velocity ratio", "leftward saccades"];
    var rows = [], lim = d.outlier_z, span = lim + 1;
    d.participants.forEach(function (p) {
      p.z.forEach(function (z, i) {
        if (z === null) return;
        rows.push({ participant: p.participant, metric: names[i], z: z });
        span = Math.max(span, Math.abs(z) + 0.5);
      });
    });
    if (!rows.length) return emptySpec(el, "Too few participants to compare (at least three are needed).");
    var n = d.participants.length;
    return {
      width: widthOf(el) - 170, height: Math.max(120, Math.min(16 * n, 700)),
      data: [{ name: "z", values: rows }, { name: "band", values: [{ lo: -lim, hi: lim }] }],
      scales: [
        { name: "y", type: "point", domain: { data: "z", field: "participant", sort: true }, range: "height", padding: 0.6 },
        { name: "x", type: "linear", domain: [-span, span], range: "width", nice: true },
        { name: "c", type: "ordinal", domain: names, range: [BLUE, ORANGE, GREEN, PURPLE, "#1d232b"] },
        { name: "s", type: "ordinal", domain: names, range: ["circle", "square", "diamond", "triangle-up", "cross"] }
      ],
      axes: [
        { orient: "left", scale: "y", title: "participant", labelOverlap: true },
        { orient: "bottom", scale: "x", title: "robust z-score", grid: true }
      ],
      legends: [{ fill: "c", shape: "s", orient: "right", title: "figure" }],
      marks: [
        { type: "rect", from: { data: "band" }, encode: { update: { x: { scale: "x", field: "lo" }, x2: { scale: "x", field: "hi" }, y: { value: 0 }, y2: { signal: "height" },
          fill: { value: "#efece6" } } } },
        { type: "rule", encode: { update: { x: { scale: "x", value: 0 }, y: { value: 0 }, y2: { signal: "height" }, stroke: { value: "#b9b4aa" } } } },
        { type: "symbol", from: { data: "z" }, encode: { update: {
          x: { scale: "x", field: "z" }, y: { scale: "y", field: "participant" }, fill: { scale: "c", field: "metric" }, shape: { scale: "s", field: "metric" },
          size: { value: 40 }, opacity: { signal: "abs(datum.z) > " + lim + " ? 1 : 0.7" },
          tooltip: { signal: "datum.participant + ', ' + datum.metric + ': z = ' + format(datum.z, '.2f')" } } } }
      ]
    };
  };

  builders["drift-confidence"] = function (el) {
    var d = data.drift;
    if (!d.present) return emptySpec(el, "Drift correction has not run.");
    var all = histogramRows(d.confidence), flagged = histogramRows(d.flagged_confidence), rows = [];
    all.forEach(function (r, i) {
      var f = flagged[i] ? flagged[i].count : 0;
      rows.push({ x0: r.x0, x1: r.x1, status: "not flagged", order: 0, n: r.count - f });
      rows.push({ x0: r.x0, x1: r.x1, status: "flagged", order: 1, n: f });
    });
    return {
      width: widthOf(el), height: 180,
      data: [{ name: "h", values: rows, transform: [{ type: "stack", groupby: ["x0"], field: "n", sort: { field: "order" } }] }],
      scales: [
        { name: "x", type: "linear", domain: [0, 1], range: "width" },
        { name: "y", type: "linear", domain: { data: "h", field: "y1" }, range: "height", nice: true, zero: true },
        { name: "c", type: "ordinal", domain: ["not flagged", "flagged"], range: [SKY, VERMILLION] }
      ],
      axes: [
        { orient: "bottom", scale: "x", title: "confidence", tickCount: 10 },
        { orient: "left", scale: "y", title: "trials", grid: true, tickCount: 5 }
      ],
      legends: [{ fill: "c", orient: "top", direction: "horizontal" }],
      marks: [{ type: "rect", from: { data: "h" }, encode: { update: {
        x: { scale: "x", field: "x0", offset: 0.5 }, x2: { scale: "x", field: "x1", offset: -0.5 }, y: { scale: "y", field: "y1" }, y2: { scale: "y", field: "y0" },
        fill: { scale: "c", field: "status" }, tooltip: { signal: "format(datum.x0, '.2f') + '–' + format(datum.x1, '.2f') + ': ' + datum.n + ' ' + datum.status" } } } }]
    };
  };

  builders["drift-participants"] = function (el) {
    var d = data.drift;
    if (!d.present) return emptySpec(el, "Drift correction has not run.");
    var rows = d.participants.map(function (p) {
      return { participant: p.participant, q1: p.confidence.q1, q3: p.confidence.q3, median: p.confidence.median, flagged: p.flagged, trials: p.trials };
    });
    return {
      width: widthOf(el) - 120, height: Math.max(100, Math.min(16 * rows.length, 700)),
      data: [{ name: "p", values: rows }, { name: "f", values: d.flagged_trials }],
      scales: [
        { name: "y", type: "band", domain: { data: "p", field: "participant", sort: true }, range: "height", padding: 0.3 },
        { name: "x", type: "linear", domain: [0, 1], range: "width" }
      ],
      axes: [
        { orient: "left", scale: "y", title: "participant", labelOverlap: true },
        { orient: "bottom", scale: "x", title: "confidence", grid: true, tickCount: 10 }
      ],
      marks: [
        { type: "rect", from: { data: "p" }, encode: { update: {
          y: { scale: "y", field: "participant" }, height: { scale: "y", band: 1 }, x: { scale: "x", field: "q1" }, x2: { scale: "x", field: "q3" },
          fill: { value: "#c9d9e8" }, stroke: { value: BLUE }, strokeWidth: { value: 0.8 },
          tooltip: { signal: "datum.participant + ': median ' + format(datum.median, '.2f') + ', quartiles ' + format(datum.q1, '.2f') + '–' + format(datum.q3, '.2f') + ', ' + datum.flagged + ' of ' + datum.trials + ' trials flagged'" } } } },
        { type: "rect", from: { data: "p" }, encode: { update: {
          y: { scale: "y", field: "participant" }, height: { scale: "y", band: 1 }, xc: { scale: "x", field: "median" }, width: { value: 2.5 }, fill: { value: "#1d232b" } } } },
        { type: "symbol", from: { data: "f" }, encode: { update: {
          y: { scale: "y", field: "participant", band: 0.5 }, x: { scale: "x", field: "confidence" }, size: { value: 36 },
          fill: { value: VERMILLION }, stroke: { value: "#ffffff" }, strokeWidth: { value: 0.6 },
          tooltip: { signal: "datum.participant + ', trial ' + datum.trial + ' (item ' + datum.item + '): confidence ' + format(datum.confidence, '.2f') + ', flagged'" } } } },
        { type: "text", from: { data: "p" }, encode: { update: {
          y: { scale: "y", field: "participant", band: 0.5 }, x: { signal: "width + 6" }, baseline: { value: "middle" }, fontSize: { value: 11 },
          text: { signal: "datum.flagged ? datum.flagged + ' flagged' : ''" }, fill: { value: VERMILLION } } } }
      ]
    };
  };

  builders["measures-distribution"] = function (el) {
    var m = data.measures;
    if (!m.present) return emptySpec(el, "The measures have not been computed.");
    var measure = el.closest("figure").id.replace("fig-measures-", "");
    var rows = m.distributions.filter(function (d) { return d.measure === measure; }).map(function (d) {
      return Object.assign({}, d, { group: groupLabel(d.role, d.cell), roleOrder: m.roles.indexOf(d.role) });
    });
    if (!rows.length) return emptySpec(el, "No values.");
    var dots = m.participant_means.filter(function (d) { return d.measure === measure; }).map(function (d) {
      return { group: groupLabel(d.role, d.cell), participant: d.participant, mean: d.mean, n: d.n, cell: d.cell };
    });
    var cs = cells.length ? cells : ["all trials"];
    return {
      width: widthOf(el) - 150, height: Math.max(80, 30 * rows.length),
      data: [{ name: "d", values: rows }, { name: "dots", values: dots }],
      scales: [
        { name: "y", type: "band", domain: { data: "d", field: "group", sort: { field: "roleOrder", op: "min" } }, range: "height", padding: 0.35 },
        { name: "x", type: "linear", domain: { fields: [{ data: "d", field: "p05" }, { data: "d", field: "p95" }, { data: "dots", field: "mean" }] }, range: "width", nice: true, zero: false },
        { name: "c", type: "ordinal", domain: cs, range: OKABE_ITO }
      ],
      axes: [
        { orient: "left", scale: "y", labelLimit: 200 },
        { orient: "bottom", scale: "x", title: "ms", grid: true, tickCount: 6 }
      ],
      legends: [{ fill: "c", orient: "bottom", direction: "vertical", columns: 1, title: "design cell", symbolType: "square", labelLimit: 320 }],
      marks: [
        { type: "rule", from: { data: "d" }, encode: { update: {
          y: { scale: "y", field: "group", band: 0.5 }, x: { scale: "x", field: "p05" }, x2: { scale: "x", field: "p95" }, stroke: { value: "#5b6470" } } } },
        { type: "rect", from: { data: "d" }, encode: { update: {
          y: { scale: "y", field: "group" }, height: { scale: "y", band: 1 }, x: { scale: "x", field: "q1" }, x2: { scale: "x", field: "q3" },
          fill: { scale: "c", field: "cell" }, fillOpacity: { value: 0.35 }, stroke: { scale: "c", field: "cell" },
          tooltip: { signal: "datum.group + ': n ' + datum.n + ', median ' + format(datum.median, '.0f') + ' ms, quartiles ' + format(datum.q1, '.0f') + '–' + format(datum.q3, '.0f') + ', 5–95 % ' + format(datum.p05, '.0f') + '–' + format(datum.p95, '.0f') + ', mean ' + format(datum.mean, '.0f')" } } } },
        { type: "symbol", from: { data: "dots" }, encode: { update: {
          y: { scale: "y", field: "group", band: 0.5 }, x: { scale: "x", field: "mean" }, size: { value: 14 }, fill: { value: "#5b6470" }, fillOpacity: { value: 0.55 },
          tooltip: { signal: "datum.participant + ': mean ' + format(datum.mean, '.0f') + ' ms over ' + datum.n" } } } },
        { type: "rect", from: { data: "d" }, encode: { update: {
          y: { scale: "y", field: "group" }, height: { scale: "y", band: 1 }, xc: { scale: "x", field: "median" }, width: { value: 2.5 }, fill: { value: "#1d232b" } } } },
        { type: "symbol", from: { data: "d" }, encode: { update: {
          y: { scale: "y", field: "group", band: 0.5 }, x: { scale: "x", field: "mean" }, shape: { value: "diamond" }, size: { value: 60 },
          fill: { value: "#ffffff" }, stroke: { value: "#1d232b" }, strokeWidth: { value: 1.2 } } } }
      ]
    };
  };

  builders["measures-probabilities"] = function (el) {
    var m = data.measures;
    if (!m.present) return emptySpec(el, "The measures have not been computed.");
    var names = { skipping: "skipping", regression_out: "regression out", regression_in: "regression in" };
    var order = { skipping: 0, regression_out: 1, regression_in: 2 };
    var rows = m.probabilities.filter(function (p) { return p.p !== null; }).map(function (p) {
      return { measure: names[p.measure], order: order[p.measure], group: groupLabel(p.role, p.cell), roleOrder: m.roles.indexOf(p.role), cell: p.cell, p: p.p, n: p.n };
    });
    if (!rows.length) return emptySpec(el, "No region has a role (the items file's roles column names them).");
    var dots = m.participant_probabilities.map(function (p) {
      return { measure: names[p.measure], order: order[p.measure], group: groupLabel(p.role, p.cell), participant: p.participant, p: p.p, n: p.n };
    });
    var groups = {};
    rows.forEach(function (r) { groups[r.group] = true; });
    var H = 26 * Object.keys(groups).length;
    var gap = 30, total = widthOfContainer(el) || 900, labelW = 220;
    var w = Math.max(110, Math.floor((total - labelW - 2 * gap - 24) / 3));
    var cs = cells.length ? cells : ["all trials"];
    var panels = ["skipping", "regression out", "regression in"].map(function (name, i) {
      return {
        type: "group",
        title: { text: name, fontSize: 12 },
        encode: { update: { x: { value: i * (w + gap) }, width: { value: w }, height: { value: H } } },
        data: [
          { name: "f" + i, source: "p", transform: [{ type: "filter", expr: "datum.measure == '" + name + "'" }] },
          { name: "d" + i, source: "dots", transform: [{ type: "filter", expr: "datum.measure == '" + name + "'" }] }
        ],
        scales: [{ name: "x", type: "linear", domain: [0, 1], range: [0, w] }],
        axes: [{ orient: "bottom", scale: "x", format: ".0%", grid: true, tickCount: 4 }],
        marks: [
          { type: "rect", from: { data: "f" + i }, encode: { update: {
            y: { scale: "y", field: "group" }, height: { scale: "y", band: 1 }, x: { scale: "x", value: 0 }, x2: { scale: "x", field: "p" },
            fill: { scale: "c", field: "cell" }, fillOpacity: { value: 0.45 }, stroke: { scale: "c", field: "cell" },
            tooltip: { signal: "datum.group + ', ' + datum.measure + ': ' + format(datum.p, '.1%') + ' of ' + datum.n" } } } },
          { type: "symbol", from: { data: "d" + i }, encode: { update: {
            y: { scale: "y", field: "group", band: 0.5 }, x: { scale: "x", field: "p" }, size: { value: 14 }, fill: { value: "#1d232b" }, fillOpacity: { value: 0.5 },
            tooltip: { signal: "datum.participant + ': ' + format(datum.p, '.1%') + ' of ' + datum.n" } } } }
        ]
      };
    });
    return {
      width: 3 * w + 2 * gap, height: H, autosize: "pad",
      data: [{ name: "p", values: rows }, { name: "dots", values: dots }],
      scales: [
        { name: "y", type: "band", domain: { data: "p", field: "group", sort: { field: "roleOrder", op: "min" } }, range: [0, H], padding: 0.3 },
        { name: "c", type: "ordinal", domain: cs, range: OKABE_ITO }
      ],
      axes: [{ orient: "left", scale: "y", labelLimit: labelW - 10 }],
      legends: [{ fill: "c", orient: "bottom", direction: "vertical", columns: 3, title: "design cell", symbolType: "square", labelLimit: 320 }],
      marks: panels
    };
  };

  // --- the trial viewer -------------------------------------------------------------------------

  // The viewer's data travels packed (io/report_html.cpp, pack): one block per
  // recording and one for the layouts, each base64 of zlib-compressed bytes
  // holding a uint32 length, a JSON text, then bytes (the time courses), and
  // each unpacked when first needed.
  var V = data.viewer;
  V.layouts = null;
  var unpacked = {};
  function unpack(id) {
    if (!unpacked[id]) {
      var el = document.getElementById(id);
      if (!el) return Promise.reject(new Error("gazemill report: the page lacks its block " + id));
      var text = atob(el.textContent.trim()), bytes = new Uint8Array(text.length);
      for (var i = 0; i < text.length; ++i) bytes[i] = text.charCodeAt(i);
      var stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("deflate"));
      unpacked[id] = new Response(stream).arrayBuffer().then(function (buf) {
        var n = new DataView(buf).getUint32(0, true);
        return { json: JSON.parse(new TextDecoder().decode(new Uint8Array(buf, 4, n))), bytes: new Uint8Array(buf, 4 + n) };
      });
    }
    return unpacked[id];
  }
  // A recording with its trials and time courses, and the layouts, once unpacked.
  function loadRecording(i) {
    var rec = V.recordings[i];
    return Promise.all([unpack(rec.packed), unpack(V.layouts_packed)]).then(function (parts) {
      rec.trials = parts[0].json.trials;
      rec.samples = parts[0].bytes;
      V.layouts = parts[1].json.layouts;
      return rec;
    });
  }
  var viewerState = { recording: 0, trial: 0, aligned: false, removed: true };

  // The time course's byte code (io/report_html.cpp, time_course): per value a
  // varint, 0 for an empty bin, else 1 + the zigzag step from the axis's last value.
  function decodeTimeCourse(rec, t) {
    if (!t.s || !rec.samples) return [];
    var bytes = rec.samples.subarray(t.s[0], t.s[0] + t.s[1]), rows = [], last = [0, 0], axis = 0, k = 0, time = 0;
    var names = ["x", "y"];
    for (var i = 0; i < bytes.length;) {
      var code = 0, shift = 0, b;
      do {
        b = bytes[i++];
        code += (b & 0x7f) * Math.pow(2, shift);
        shift += 7;
      } while (b & 0x80);
      var v = null;
      if (code > 0) {
        var z = code - 1;
        last[axis] += (z % 2 === 0) ? z / 2 : -(z + 1) / 2;
        v = last[axis];
      }
      time = (Math.floor(k / 2) + 0.5) * t.bin;
      rows.push({ t: time, axis: names[axis], v: v });
      ++k;
      axis = 1 - axis;
    }
    return rows;
  }

  function layoutOf(t) { return t.layout >= 0 && V.layouts ? V.layouts[t.layout] : null; }

  function advance(c) {
    var a = V.advances && V.advances[c];
    return a === undefined || a === null ? V.char_width : a;
  }

  // The trial's data for the two charts: text, regions, fixations, saccades, time course.
  function trialData(rec, t) {
    var layout = layoutOf(t);
    var chars = [], regions = [], lines = [];
    if (layout) {
      layout.lines.forEach(function (l, i) { lines.push({ line: i, top: l[0], bottom: l[1], mid: (l[0] + l[1]) / 2 }); });
      layout.regions.forEach(function (r, i) {
        r.boxes.forEach(function (b) { regions.push({ region: i + 1, label: r.label, role: r.role || "", left: b[0], top: b[1], right: b[2], bottom: b[3] }); });
      });
      layout.words.forEach(function (w) {
        var x = w[2], line = lines[w[1]];
        for (var i = 0; i < w[0].length; ++i) {
          var a = advance(w[0][i]);
          chars.push({ c: w[0][i], x: x + a / 2, y: line ? line.mid : 0 });
          x += a;
        }
      });
    }
    var fix = [], number = 0;
    t.f.forEach(function (f) {
      var removed = f.length > 5;
      var row = { start: f[0], dur: f[1], x: f[2], y: f[3], line: f[4], removed: removed, rule: removed ? f[5] : -1, merged: removed ? f[6] === 1 : false };
      row.ya = row.line >= 0 && lines[row.line] ? lines[row.line].mid : row.y;
      if (!removed) row.n = ++number;
      row.ruleName = removed && row.rule >= 0 ? (row.rule + 1) + ". " + V.rules[row.rule] : "";
      fix.push(row);
    });
    var kept = fix.filter(function (f) { return !f.removed && f.x !== null; });
    var sacc = [];
    for (var i = 1; i < kept.length; ++i) sacc.push({ x: kept[i - 1].x, y: kept[i - 1].y, ya: kept[i - 1].ya, x2: kept[i].x, y2: kept[i].y, ya2: kept[i].ya });
    return { chars: chars, regions: regions, lines: lines, fix: fix, sacc: sacc, samples: decodeTimeCourse(rec, t) };
  }

  function extent(td) {
    var xs = [], ys = [];
    td.regions.forEach(function (r) { xs.push(r.left, r.right); ys.push(r.top, r.bottom); });
    td.fix.forEach(function (f) { if (f.x !== null) { xs.push(f.x); ys.push(f.y, f.ya); } });
    if (!xs.length) { xs = [0, V.screen[0] || 1000]; ys = [0, V.screen[1] || 600]; }
    var x0 = Math.min.apply(null, xs), x1 = Math.max.apply(null, xs), y0 = Math.min.apply(null, ys), y1 = Math.max.apply(null, ys);
    var pad = 40;
    return [x0 - pad, x1 + pad, y0 - pad, y1 + pad];
  }

  var ROLE_FILL = { target: "#fbe3b3", spillover: "#d6ebf7" };

  function scanpathSpec(el) {
    var w = Math.max(300, (widthOfContainer(el) || 1000) - 24);
    return {
      width: w, height: 300, autosize: "none", padding: { left: 10, right: 10, top: 10, bottom: 10 },
      signals: [
        { name: "xdom", value: [0, 1000] }, { name: "ydom", value: [0, 400] }, { name: "aligned", value: false }, { name: "showRemoved", value: true },
        { name: "pxScale", update: "width / (xdom[1] - xdom[0])" }, { name: "charPx", value: 12 }
      ],
      data: [
        { name: "regions", values: [] }, { name: "chars", values: [] }, { name: "fix", values: [] }, { name: "sacc", values: [] },
        { name: "kept", source: "fix", transform: [{ type: "filter", expr: "!datum.removed && isValid(datum.x)" }] },
        { name: "removedFix", source: "fix", transform: [{ type: "filter", expr: "datum.removed && showRemoved && isValid(datum.x)" }] }
      ],
      scales: [
        { name: "x", type: "linear", domain: { signal: "xdom" }, range: "width", zero: false },
        { name: "y", type: "linear", domain: { signal: "ydom" }, range: [0, { signal: "height" }], zero: false },
        { name: "size", type: "linear", domain: [0, 600], range: [0, { signal: "1500 * pxScale * pxScale" }], clamp: false, zero: true },
        { name: "rulecolour", type: "ordinal", domain: { data: "removedFix", field: "ruleName" }, range: [VERMILLION, PURPLE, ORANGE, GREEN, "#1d232b", SKY, BLUE] }
      ],
      legends: [{ stroke: "rulecolour", title: "removed by", orient: "top-right", symbolType: "cross", symbolSize: 80, labelLimit: 320,
        encode: { title: { update: { opacity: { signal: "length(data('removedFix')) ? 1 : 0" } } } } }],
      marks: [
        { type: "rect", from: { data: "regions" }, encode: { update: {
          x: { scale: "x", field: "left" }, x2: { scale: "x", field: "right" }, y: { scale: "y", field: "top" }, y2: { scale: "y", field: "bottom" },
          fill: { signal: "datum.role == 'target' ? '" + ROLE_FILL.target + "' : datum.role == 'spillover' ? '" + ROLE_FILL.spillover + "' : '#ffffff'" },
          stroke: { value: "#cfcac0" }, strokeWidth: { value: 0.8 },
          tooltip: { signal: "'region ' + datum.region + (datum.role ? ' (' + datum.role + ')' : '') + ': ' + datum.label" } } } },
        { type: "rule", from: { data: "sacc" }, encode: { update: {
          x: { scale: "x", field: "x" }, y: { scale: "y", signal: "aligned ? datum.ya : datum.y" },
          x2: { scale: "x", field: "x2" }, y2: { scale: "y", signal: "aligned ? datum.ya2 : datum.y2" }, stroke: { value: BLUE }, strokeOpacity: { value: 0.55 }, strokeWidth: { value: 1.2 } } } },
        { type: "symbol", from: { data: "kept" }, encode: { update: {
          x: { scale: "x", field: "x" }, y: { scale: "y", signal: "aligned ? datum.ya : datum.y" }, size: { scale: "size", field: "dur" },
          fill: { value: BLUE }, fillOpacity: { value: 0.2 }, stroke: { value: BLUE }, strokeWidth: { value: 1 },
          tooltip: { signal: "'fixation ' + datum.n + ': ' + datum.dur + ' ms at ' + datum.start + ' ms, (' + datum.x + ', ' + datum.y + ') px' + (datum.line >= 0 ? ', line ' + (datum.line + 1) : '')" } } } },
        { type: "text", from: { data: "chars" }, encode: { update: {
          x: { scale: "x", field: "x" }, y: { scale: "y", field: "y" }, text: { field: "c" }, align: { value: "center" }, baseline: { value: "middle" },
          font: { value: MONO }, fontSize: { signal: "max(6, charPx * pxScale / 0.62)" }, fill: { value: "#3b434d" } } } },
        { type: "text", from: { data: "kept" }, encode: { update: {
          x: { scale: "x", field: "x" }, text: { field: "n" }, align: { value: "center" }, baseline: { value: "bottom" },
          y: { signal: "scale('y', aligned ? datum.ya : datum.y) - sqrt(scale('size', datum.dur) / PI) - 1" },
          fontSize: { value: 10 }, fontWeight: { value: 700 }, fill: { value: "#0b3d5e" } } } },
        { type: "symbol", from: { data: "removedFix" }, encode: { update: {
          x: { scale: "x", field: "x" }, y: { scale: "y", field: "y" }, shape: { value: "cross" }, angle: { value: 45 }, size: { value: 150 },
          fill: { scale: "rulecolour", field: "ruleName" }, stroke: { value: "#ffffff" }, strokeWidth: { value: 0.6 },
          tooltip: { signal: "(datum.merged ? 'merged away by ' : 'removed by ') + datum.ruleName + ': ' + datum.dur + ' ms at ' + datum.start + ' ms'" } } } },
        { type: "text", from: { data: "removedFix" }, encode: { update: {
          x: { scale: "x", field: "x", offset: 7 }, y: { scale: "y", field: "y", offset: -7 }, text: { signal: "'r' + (datum.rule + 1)" },
          fontSize: { value: 10 }, fill: { scale: "rulecolour", field: "ruleName" }, fontWeight: { value: 700 } } } }
      ]
    };
  }

  function timeSpec(el) {
    var w = Math.max(300, (widthOfContainer(el) || 1000) - 110), h = 110;
    function panel(axis, y0, colour, title) {
      return {
        type: "group", encode: { update: { x: { value: 0 }, y: { value: y0 }, width: { signal: "width" }, height: { value: h } } },
        data: [{ name: axis, source: "samples", transform: [{ type: "filter", expr: "datum.axis == '" + axis + "'" }] }],
        scales: [{ name: "v", type: "linear", domain: { signal: axis + "dom" }, range: [h, 0], nice: true, zero: false }],
        axes: [{ orient: "left", scale: "v", title: title, tickCount: 4, grid: true }],
        marks: [
          { type: "rect", from: { data: "fixspans" }, encode: { update: {
            x: { scale: "t", field: "start" }, x2: { scale: "t", signal: "datum.start + datum.dur" }, y: { value: 0 }, y2: { value: h },
            fill: { signal: "datum.removed ? '" + VERMILLION + "' : '" + SKY + "'" }, fillOpacity: { signal: "datum.removed ? 0.18 : 0.16" } } } },
          { type: "line", from: { data: axis }, encode: { update: {
            x: { scale: "t", field: "t" }, y: { scale: "v", field: "v" }, defined: { signal: "isValid(datum.v)" }, stroke: { value: colour }, strokeWidth: { value: 1.4 } } } }
        ]
      };
    }
    return {
      width: w, height: 2 * h + 24, autosize: "pad", padding: { left: 64, right: 8, top: 4, bottom: 4 },
      signals: [{ name: "duration", value: 1000 }, { name: "xdom", value: [0, 100] }, { name: "ydom", value: [0, 100] }],
      data: [{ name: "samples", values: [] }, { name: "fixspans", values: [] }],
      scales: [
        { name: "t", type: "linear", domain: [0, { signal: "duration" }], range: "width", zero: true },
        { name: "c", type: "ordinal", domain: ["x", "y", "kept fixation", "removed fixation"], range: [BLUE, ORANGE, "#bfe0f4", "#f5c9b0"] }
      ],
      axes: [{ orient: "bottom", scale: "t", title: "time from the trial's start (ms)", tickCount: 10, offset: 0 }],
      legends: [{ fill: "c", orient: "top", direction: "horizontal", symbolType: "square" }],
      marks: [panel("x", 0, BLUE, "x (px)"), panel("y", h + 24, ORANGE, "y (px)")]
    };
  }

  function trialOptionText(t) {
    var s = "trial " + t.id + " · item " + t.item + (t.cell ? " · " + t.cell : "");
    if (!t.kept) s += " · excluded";
    if (t.align && t.align[2]) s += " · flagged";
    return s;
  }

  function fillTrialSelect() {
    var sel = document.getElementById("viewer-trial");
    var rec = V.recordings[viewerState.recording];
    sel.textContent = "";
    rec.trials.forEach(function (t, i) {
      var o = document.createElement("option");
      o.value = String(i);
      o.textContent = trialOptionText(t);
      sel.appendChild(o);
    });
    sel.value = String(viewerState.trial);
  }

  function setStatus(t, td) {
    var rec = V.recordings[viewerState.recording];
    var el = document.getElementById("viewer-status");
    el.textContent = "";
    var kept = td.fix.filter(function (f) { return !f.removed; }).length, removed = td.fix.length - kept;
    var parts = [rec.participant + (rec.session ? " (session " + rec.session + ")" : ""), "trial " + t.id, "item " + t.item + (t.cell ? " (" + t.cell + ")" : ""),
      t.duration + " ms", kept + " fixations kept" + (removed ? ", " + removed + " removed" : "")];
    if (t.align) parts.push("lines by " + t.align[0] + ", confidence " + (t.align[1] === null ? "–" : t.align[1].toFixed(2)));
    el.appendChild(document.createTextNode(parts.join(" · ")));
    if (!t.kept || (t.align && t.align[2])) {
      var span = document.createElement("span");
      span.className = "flag";
      span.textContent = (!t.kept ? " · excluded by " + t.why : "") + (t.align && t.align[2] ? " · flagged by line assignment" : "");
      el.appendChild(span);
    }
    if (!layoutOf(t)) el.appendChild(document.createTextNode(" · (no text: the region files were not found)"));
  }

  function showTrial() {
    return loadRecording(viewerState.recording).then(drawTrial);
  }

  function drawTrial(rec) {
    var t = rec.trials[viewerState.trial];
    if (!t) return Promise.resolve();
    var td = trialData(rec, t);
    var ex = extent(td);
    var sv = views["viewer-scanpath"], tv = views["viewer-time"];
    var jobs = [];
    if (sv) {
      var w = sv.width();
      var h = Math.max(120, Math.min(620, Math.round(w * (ex[3] - ex[2]) / (ex[1] - ex[0]))));
      // One px of the screen is as wide as it is high on the chart: widen the shorter range.
      var xspan = ex[1] - ex[0], yspan = ex[3] - ex[2];
      if (yspan / xspan > h / w) { var extra = (yspan * w / h - xspan) / 2; ex[0] -= extra; ex[1] += extra; }
      else { var extraY = (xspan * h / w - yspan) / 2; ex[2] -= extraY; ex[3] += extraY; }
      sv.height(h);
      sv.signal("xdom", [ex[0], ex[1]]).signal("ydom", [ex[2], ex[3]]).signal("charPx", V.char_width || 12)
        .signal("aligned", viewerState.aligned).signal("showRemoved", viewerState.removed);
      sv.data("regions", td.regions).data("chars", td.chars).data("fix", td.fix).data("sacc", td.sacc);
      sv.description("Trial " + t.id + " of " + rec.participant + ": " + td.fix.length + " fixations over the text of item " + t.item + ".");
      jobs.push(sv.runAsync());
    }
    if (tv) {
      // Each axis spans at least 80 px, so that a steady gaze is not drawn as a wild one.
      ["x", "y"].forEach(function (axis) {
        var vs = td.samples.filter(function (r) { return r.axis === axis && r.v !== null; }).map(function (r) { return r.v; });
        var lo = vs.length ? Math.min.apply(null, vs) : 0, hi = vs.length ? Math.max.apply(null, vs) : 100;
        if (hi - lo < 80) { var mid = (hi + lo) / 2; lo = mid - 40; hi = mid + 40; }
        tv.signal(axis + "dom", [lo, hi]);
      });
      tv.signal("duration", t.duration || 1);
      tv.data("samples", td.samples).data("fixspans", td.fix.filter(function (f) { return viewerState.removed || !f.removed; }));
      tv.description("Gaze x and y over the " + t.duration + " ms of trial " + t.id + " of " + rec.participant + ".");
      jobs.push(tv.runAsync());
    }
    setStatus(t, td);
    viewerApi.shown = { recording: rec.id, participant: rec.participant, trial: t.id, fixations: td.fix.length,
      kept: td.fix.filter(function (f) { return !f.removed; }).length, chars: td.chars.length, samples: td.samples.length / 2 };
    return Promise.all(jobs);
  }

  var viewerApi = {
    shown: null,
    select: function (recording, trial) {
      viewerState.recording = recording;
      document.getElementById("viewer-recording").value = String(recording);
      return loadRecording(recording).then(function (rec) {
        viewerState.trial = trial < 0 ? rec.trials.length - 1 : (trial || 0);
        fillTrialSelect();
        return drawTrial(rec);
      });
    },
    open: function (recordingId, trialId) {
      for (var i = 0; i < V.recordings.length; ++i) {
        if (V.recordings[i].id !== recordingId) continue;
        return loadRecording(i).then(function (rec) {
          for (var k = 0; k < rec.trials.length; ++k) {
            if (rec.trials[k].id === trialId) return viewerApi.select(V.recordings.indexOf(rec), k);
          }
        });
      }
      return Promise.resolve();
    }
  };

  function step(delta) {
    var rec = V.recordings[viewerState.recording];
    var next = viewerState.trial + delta;
    if (next < 0 && viewerState.recording > 0) return viewerApi.select(viewerState.recording - 1, -1);
    if (next >= rec.trials.length && viewerState.recording + 1 < V.recordings.length) return viewerApi.select(viewerState.recording + 1, 0);
    viewerState.trial = Math.max(0, Math.min(rec.trials.length - 1, next));
    document.getElementById("viewer-trial").value = String(viewerState.trial);
    return showTrial();
  }

  function wireViewer() {
    if (!V.present || !V.recordings.length) return;
    document.getElementById("viewer-recording").addEventListener("change", function (e) { viewerApi.select(Number(e.target.value), 0); });
    document.getElementById("viewer-trial").addEventListener("change", function (e) { viewerState.trial = Number(e.target.value); showTrial(); });
    document.getElementById("viewer-prev").addEventListener("click", function () { step(-1); });
    document.getElementById("viewer-next").addEventListener("click", function () { step(1); });
    document.getElementById("viewer-aligned").addEventListener("change", function (e) { viewerState.aligned = e.target.checked; showTrial(); });
    document.getElementById("viewer-removed").addEventListener("change", function (e) { viewerState.removed = e.target.checked; showTrial(); });
    document.getElementById("viewer-controls").addEventListener("submit", function (e) { e.preventDefault(); });
    // Flagged trials open in the viewer.
    document.querySelectorAll("table.flagged tbody tr").forEach(function (tr) {
      var cellsEl = tr.children;
      var recording = cellsEl[1].textContent, trial = cellsEl[2].textContent;
      var td = document.createElement("td"), b = document.createElement("button");
      b.type = "button";
      b.className = "open-trial";
      b.textContent = "view";
      b.setAttribute("aria-label", "view trial " + trial + " of " + recording + " in the trial viewer");
      b.addEventListener("click", function () {
        viewerApi.open(recording, trial).then(function () { document.getElementById("viewer").scrollIntoView(); });
      });
      td.appendChild(b);
      tr.appendChild(td);
    });
    var head = document.querySelector("table.flagged thead tr");
    if (head) { var th = document.createElement("th"); th.textContent = ""; head.appendChild(th); }
  }

  builders["viewer-scanpath"] = function (el) { return V.present ? scanpathSpec(el) : emptySpec(el, "No recordings."); };
  builders["viewer-time"] = function (el) { return V.present ? timeSpec(el) : emptySpec(el, "No recordings."); };

  // --- render everything ----------------------------------------------------------------------

  function render(el) {
    var key = el.getAttribute("data-chart");
    try {
      var build = builders[key];
      if (!build) throw new Error("no chart named " + key);
      var spec = build(el);
      // Single-panel charts fill their figure's width, axes and legends included;
      // faceted ones size their panels themselves.
      if (!spec.layout && !spec.autosize) {
        spec.autosize = { type: "fit-x", contains: "padding" };
        spec.width = Math.max(280, widthOfContainer(el) - 4);
      }
      spec.description = el.getAttribute("aria-label") || "";
      spec.config = CONFIG;
      var tb = performance.now();
      var parsed = vega.parse(spec);
      var tp = performance.now();
      var view = new vega.View(parsed, { renderer: "svg", container: el, hover: true });
      timings["build " + key] = [Math.round(tp - tb), Math.round(performance.now() - tp)];
      var id = el.closest("figure").id;
      views[key === "viewer-scanpath" || key === "viewer-time" ? key : id] = view;
      var t0 = performance.now();
      return view.runAsync().then(function (v) { timings["chart " + id] = [Math.round(t0), Math.round(performance.now() - t0)]; return v; })
        .catch(function (e) { throw new Error("chart " + key + ": " + (e && e.stack || e)); });
    } catch (e) {
      return Promise.reject(new Error("chart " + key + ": " + (e && e.stack || e)));
    }
  }

  var api = { ready: null, views: views, viewer: viewerApi, vega: vega, timings: timings };
  globalThis.gazemillReport = api;
  // Drawing order: the charts on the first screen, then, after a paint, the
  // rest (any chart scrolled to before then goes first). data-first-screen-ms marks the page usable; data-ready-ms every
  // chart and the trial viewer drawn.
  var chartElements = Array.prototype.slice.call(document.querySelectorAll(".vega[data-chart]"));
  chartElements.forEach(widthOfContainer);
  var drawn = new Map();
  function draw(el) {
    if (!drawn.has(el)) drawn.set(el, render(el));
    return drawn.get(el);
  }
  function yieldToPage() { return new Promise(function (resolve) { setTimeout(resolve, 0); }); }
  var screenBottom = window.innerHeight + 200;
  var firstScreen = chartElements.filter(function (el) { return el.getBoundingClientRect().top < screenBottom; });
  // The first recording's block is unpacked meanwhile.
  var viewerData = V.present && V.recordings.length ? loadRecording(0).then(fillTrialSelect) : Promise.resolve();
  var first = Promise.all(firstScreen.map(draw)).then(function () {
    wireViewer();
    document.documentElement.setAttribute("data-first-screen-ms", String(Math.round(performance.now())));
  });
  if (typeof IntersectionObserver === "function") {
    var seen = new IntersectionObserver(function (entries) {
      entries.forEach(function (e) {
        if (e.isIntersecting) { draw(e.target); seen.unobserve(e.target); }
      });
    }, { rootMargin: "300px" });
    chartElements.forEach(function (el) { seen.observe(el); });
  }
  // The rest in one go once the first screen is painted: in batches of four,
  // the page was laid out and painted again after each (some 200 ms a time
  // for a 40 x 120 study), which cost more than it gave.
  var rest = first.then(yieldToPage).then(function () { return Promise.all(chartElements.map(draw)); });
  window.addEventListener("beforeprint", function () { chartElements.forEach(draw); });
  var viewerCharts = chartElements.filter(function (el) { return /^viewer-/.test(el.getAttribute("data-chart")); });
  var viewerShown = Promise.all([first, viewerData].concat(viewerCharts.map(function (el) {
    return first.then(function () { return draw(el); });
  }))).then(function () {
    timings.charts_and_viewer = performance.now();
    return V.present && V.recordings.length ? showTrial() : null;
  });
  api.firstScreen = first;
  api.ready = Promise.all([rest, viewerShown])
    .then(function () {
      timings.trial_shown = performance.now();
      document.documentElement.setAttribute("data-ready-ms", String(Math.round(performance.now())));
      return true;
    });
  api.ready.catch(function (e) {
    console.error("gazemill report: " + (e && e.message || e));
    document.documentElement.setAttribute("data-error", String(e && e.message || e));
  });
})();
