#pragma once
// The study report as one self-contained HTML page: every script, style and
// datum inline, nothing fetched from anywhere (a Content-Security-Policy of
// default-src 'none' makes the browser refuse any request). Charts are Vega
// specifications (Debian's libjs-vega, carried in the program) built by the
// page's own script from the data, which is embedded as JSON.
//
// The page's static parts (headings, tables, captions, alternative texts)
// are written here through an escaping writer; the JSON through
// nlohmann::json, with '<', '>' and '&' escaped so that no text can close
// the script element that holds it.

#include <string>

#include "pipeline/report_model.h"

namespace gazemill {

/// The page as text.
std::string report_html(const ReportModel& model);
/// Writes it to `path` (through a temporary file renamed into place).
void write_report_html(const ReportModel& model, const std::string& path);

/// Packs a recording's trials into the block the page carries for it
/// (ViewerRecording::packed) and empties `trials`: the page is the same as
/// from the unpacked recording. Safe to call on several recordings at once.
void pack_viewer_recording(ViewerRecording& recording);

/// The embedded scripts and styles by name ("report.js", "report.css",
/// "vega-util", ...), as carried in the program.
const std::string& report_asset(const std::string& name);

}  // namespace gazemill
