#pragma once
// Private to stipple's own targets: the JSON record of one result element, as it appears in
// the documents of `stipple density|randomness|transect --json`. Batch streams the same
// records into its JSON twins, so a batch record equals the single command's by construction.

#include <optional>

#include <nlohmann/json.hpp>

#include "stipple/intensity/density.hpp"
#include "stipple/randomness/analysis.hpp"
#include "stipple/transect/estimate.hpp"

namespace stipple::report_detail {

/// An `estimates` entry of the density document.
[[nodiscard]] nlohmann::ordered_json density_estimate_record(const DensityEstimate& estimate);
/// A `pooled` entry of the density document.
[[nodiscard]] nlohmann::ordered_json pooled_record(const PooledEstimate& pooled);
/// The `composition` value of the density document (null without a test).
[[nodiscard]] nlohmann::ordered_json composition_record(const std::optional<CompositionTest>& test);
/// A `results` entry of the randomness document.
[[nodiscard]] nlohmann::ordered_json randomness_group_record(const GroupResult& group);
/// An `interactions` entry of the randomness document.
[[nodiscard]] nlohmann::ordered_json interaction_record(const InteractionResult& interaction);
/// A `results` entry of the transect document.
[[nodiscard]] nlohmann::ordered_json transect_estimate_record(const TransectResult& result,
                                                              const TransectEstimate& estimate);

}  // namespace stipple::report_detail
