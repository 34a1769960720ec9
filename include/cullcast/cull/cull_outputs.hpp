#pragma once
// CONTRACT. cull_ranking.csv and cull_curve.csv (docs/formats.md), written
// atomically (cullcast::AtomicFile). Numbers with 6 significant digits.
#include <filesystem>
#include <vector>

#include "cullcast/cull/explanation.hpp"

namespace cullcast::cull {

void write_cull_ranking_csv(const std::filesystem::path& file, const Robustness& r,
                            const std::vector<Explanation>& explanations);
void write_cull_curve_csv(const std::filesystem::path& file, const std::vector<CurvePoint>& curve);

}  // namespace cullcast::cull
