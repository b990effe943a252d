// A small CommonJS-style module table for the libraries carried in the page.
// Debian's libjs-vega ships each Vega module as its own UMD file; loaded as
// plain scripts they would each reset the global `vega`, so every file is
// wrapped as gzmDefine(name, factory) and the UMD wrapper finds `exports`,
// `module` and `require` here, in the order the modules require each other.
(function () {
  "use strict";
  var factories = Object.create(null);
  var cache = Object.create(null);
  // The module Vega's sources require as "vega-selections" is Debian's vega-selection.js.
  var aliases = { "vega-selections": "vega-selection" };
  function load(name) {
    name = aliases[name] || name;
    if (cache[name]) return cache[name].exports;
    if (!factories[name]) throw new Error("gazemill report: the module " + name + " is not carried in this page");
    var module = { exports: {} };
    cache[name] = module;
    factories[name].call(globalThis, module.exports, module, load);
    return module.exports;
  }
  globalThis.gzmDefine = function (name, factory) { factories[name] = factory; };
  globalThis.gzmRequire = load;
})();
