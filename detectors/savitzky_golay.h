#pragma once
// Savitzky-Golay filter coefficients (Savitzky & Golay 1964), computed by
// least squares rather than typed from the published tables (which had errors,
// corrected by Steinier, Termonia & Deltour 1972).

#include <vector>

namespace gazemill {

/// Coefficients c[0..window-1] for the centre sample, in "dot" order: the
/// estimate at sample n is sum_k c[k] * x[n - h + k] with h = window / 2, for
/// unit sample spacing (divide by dt^derivative for other spacings; the
/// derivative's factorial is included, as in scipy.signal.savgol_coeffs).
/// window must be odd and greater than order; derivative <= order.
/// Throws std::invalid_argument otherwise.
std::vector<double> savitzky_golay_coefficients(int window, int order, int derivative);

/// The same least-squares fit evaluated at `position` samples from the window's
/// centre (-window/2 .. window/2), for samples too near an edge to be centred,
/// as scipy.signal.savgol_filter's mode='interp' does.
std::vector<double> savitzky_golay_coefficients_at(int window, int order, int derivative, int position);

/// The coefficients for every position of a window, table[position +
/// window / 2], computed once per (window, order, derivative) and kept for
/// the life of the calling thread: every trace and every saccade's peak
/// velocity reuse them. The reference stays valid.
const std::vector<std::vector<double>>& savitzky_golay_table(int window, int order, int derivative);

/// `values` smoothed by a Savitzky-Golay fit of `order` over `window` samples
/// (odd), stretch by stretch of usable samples, so nothing is smoothed across
/// missing data nor across a step marked in `gap_before` (true at i when the
/// step from i - 1 to i is a gap in the timestamps; empty = no gaps). The
/// first and last window/2 samples of a stretch take the fit over its first
/// or last whole window, evaluated off-centre (as scipy.signal.savgol_filter's
/// mode='interp' does at the ends); a stretch shorter than the window keeps
/// its own values.
std::vector<double> savitzky_golay_smooth(const std::vector<double>& values, const std::vector<bool>& usable,
                                          const std::vector<bool>& gap_before, int window, int order);

}  // namespace gazemill
