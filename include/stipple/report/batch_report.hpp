#pragma once
/// The self-contained HTML report of a batch output folder.

#include <string>

namespace stipple {

/// Builds one HTML file (figures and maps inline as SVG, no external resources) from the
/// files `stipple batch` wrote in `out_dir`: inputs with checksums, CRS, options, seed and
/// version, density and randomness tables, L-envelope figures, plot maps, a methods
/// paragraph generated from the options used, and the cautions. Throws InputError when
/// `out_dir` holds no batch output.
[[nodiscard]] std::string batch_report_html(const std::string& out_dir);

}  // namespace stipple
