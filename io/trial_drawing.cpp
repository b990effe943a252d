#include "io/trial_drawing.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace gazemill {
namespace {

std::string escape(const std::string& s) {
  std::string out;
  for (char c : s) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += c;
    }
  }
  return out;
}

// Okabe & Ito (2008): blue for the recorded positions, vermillion for the corrected ones.
constexpr const char* kRecorded = "#0072B2";
constexpr const char* kCorrected = "#D55E00";

}  // namespace

std::string trial_drawing_svg(const TrialDrawing& d) {
  double left = 1e300, top = 1e300, right = -1e300, bottom = -1e300;
  auto extend = [&](double x, double y) {
    if (!std::isfinite(x) || !std::isfinite(y)) return;
    left = std::min(left, x);
    right = std::max(right, x);
    top = std::min(top, y);
    bottom = std::max(bottom, y);
  };
  for (const auto& b : d.boxes) {
    extend(b.left_px, b.top_px);
    extend(b.right_px, b.bottom_px);
  }
  for (const auto& f : d.fixations) {
    extend(f.x_px, f.y_px);
    extend(f.x_px, f.corrected_y_px);
  }
  if (left > right) left = right = top = bottom = 0;
  const double pad = 40, head = 36;
  const double x0 = left - pad, y0 = top - pad - head, w = right - left + 2 * pad, h = bottom - top + 2 * pad + head;
  std::string s = fmt::format(R"(<svg xmlns="http://www.w3.org/2000/svg" viewBox="{:.0f} {:.0f} {:.0f} {:.0f}" width="{:.0f}" height="{:.0f}" font-family="sans-serif">)"
                              "\n<title>{}</title>\n",
                              x0, y0, w, h, w, h, escape(d.title));
  s += fmt::format(R"(<rect x="{:.0f}" y="{:.0f}" width="{:.0f}" height="{:.0f}" fill="#ffffff"/>)" "\n", x0, y0, w, h);
  s += fmt::format(R"(<text x="{:.0f}" y="{:.0f}" font-size="14" fill="#222222">{}</text>)" "\n", x0 + 10, y0 + 22, escape(d.title));
  s += fmt::format(R"(<text x="{:.0f}" y="{:.0f}" font-size="11" fill="#555555"><tspan fill="{}">&#9675; recorded</tspan>  <tspan fill="{}">&#9679; on the line drift correction chose</tspan></text>)" "\n",
                   x0 + w - 380, y0 + 22, kRecorded, kCorrected);
  for (const auto& [t, b] : d.lines) {
    s += fmt::format(R"(<rect x="{:.1f}" y="{:.1f}" width="{:.1f}" height="{:.1f}" fill="#f3f3f3"/>)" "\n", left, t, right - left, b - t);
  }
  for (const auto& b : d.boxes) {
    s += fmt::format(R"(<rect x="{:.1f}" y="{:.1f}" width="{:.1f}" height="{:.1f}" fill="none" stroke="#999999" stroke-width="1"/>)"
                     R"(<text x="{:.1f}" y="{:.1f}" font-size="11" fill="#666666">{}</text>)" "\n",
                     b.left_px, b.top_px, b.right_px - b.left_px, b.bottom_px - b.top_px, b.left_px + 2, b.bottom_px - 6, escape(b.label));
  }
  for (std::size_t i = 0; i < d.fixations.size(); ++i) {
    const auto& f = d.fixations[i];
    const double r = 3 + std::sqrt(std::max(0.0, f.duration_ms)) / 3;
    if (std::isfinite(f.corrected_y_px)) {
      s += fmt::format(R"(<line x1="{:.1f}" y1="{:.1f}" x2="{:.1f}" y2="{:.1f}" stroke="#888888" stroke-width="1"/>)"
                       R"(<circle cx="{:.1f}" cy="{:.1f}" r="{:.1f}" fill="{}" fill-opacity="0.7"/>)" "\n",
                       f.x_px, f.y_px, f.x_px, f.corrected_y_px, f.x_px, f.corrected_y_px, r, kCorrected);
    }
    s += fmt::format(R"(<circle cx="{:.1f}" cy="{:.1f}" r="{:.1f}" fill="none" stroke="{}" stroke-width="1.5"/>)"
                     R"(<text x="{:.1f}" y="{:.1f}" font-size="10" fill="{}">{}</text>)" "\n",
                     f.x_px, f.y_px, r, kRecorded, f.x_px + r + 1, f.y_px - r, kRecorded, i + 1);
  }
  s += "</svg>\n";
  return s;
}

}  // namespace gazemill
