// Comparisons among the means of one table: standard errors of differences, Fisher's least significant
// difference, Tukey's honestly significant difference (Tukey–Kramer for unequal variances) and the
// letter display of which means differ. Used by analyze_trial (analysis.cpp); kept apart so that each
// step can be read and tested alone.
//
//   LSD_ij = t(0.975; ν)·SED_ij                     Fisher's LSD (Gomez & Gomez 1984, ch. 5, from memory)
//   HSD_ij = q(0.95; k, ν)·SED_ij/√2                Tukey (1953); Kramer (1956) for unequal SED, the
//                                                   form of R's TukeyHSD
//   Tukey p_ij = P(Q > |d_ij|/(SED_ij/√2)), Q the studentized range of k means on ν df
// Letters: the insert-and-absorb algorithm of Piepho, H.-P. (2004) "An algorithm for a letter-based
// representation of all-pairwise comparisons", Journal of Computational and Graphical Statistics 13,
// 456–466: start with one letter for all means; for every significantly different pair split each
// letter holding both into two (one without each), then drop letters whose means all share another
// letter. Letters are then named a, b, ... in the order of the largest mean they hold.
#pragma once
#include <string>
#include <vector>

#include "core/stats/analysis.hpp"

namespace pw::compare {

// Letters for each mean (empty strings and `ok` false when more than 52 letters would be needed).
// `differs[i][j]` non-zero when means i and j differ significantly; `means` orders the letters.
std::vector<std::string> letters(const std::vector<double>& means, const std::vector<std::vector<char>>& differs,
                                 bool& ok);

// Fills sed, sed_min, sed_max, lsd_5pct, hsd_5pct, pairs and the letter groups of `table` from its rows'
// means and `var_diff` (k × k, row-major: the variance of mean i − mean j, error MS included). Rows
// without a mean take no part. Needs table.error_df >= 1 (Tukey: >= 2).
void compare_means(MeansTable& table, const std::vector<double>& var_diff);

}  // namespace pw::compare
