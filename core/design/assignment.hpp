// A design before it meets the ground: which treatment goes to which unit of which block, and where each
// unit sits inside its block's own small grid. One generator per design produces it from plain numbers
// (how many treatments, levels, replicates) and an Rng; the field geometry (core/design/geometry) then
// lays the blocks across the gradient, and numbers and orders the plots.
//
// Conventions every generator keeps:
//  - blocks are numbered 1..B in the order they are laid along the gradient (block 1 at its low end);
//    a "block" here is the unit of placement: a complete block, one incomplete block of a resolvable
//    design, a whole Latin square, one pair;
//  - cell_row counts along the gradient (0 at the block's low-gradient edge), cell_col across it
//    (0 at the block's stake-side end); within a block every (cell_row, cell_col) is used at most once and
//    lies inside the block's shape;
//  - treatment indexes the expanded treatment list (for factorials: the crossing of the factor levels in
//    row-major order, first factor slowest; see the generator's header for any other order);
//  - design columns that do not apply are 0.
#pragma once
#include <string>
#include <vector>

namespace pw {

struct BlockShape {
    int rows = 1;   // cells along the gradient
    int cols = 1;   // cells across the gradient
};

struct DesignUnit {
    int block = 0;
    int rep = 0;                 // replicate: RCBD = block; alpha = replicate; Latin square = 1; CRD = 0
    int incomplete_block = 0;    // alpha-lattice: block within its replicate; augmented: the block
    int main = 0;                // split-plot: main plot within the block; strip-plot: the A strip
    int sub = 0;                 // split-plot: subplot within the main plot; strip-plot: the B strip
    int square_row = 0;          // Latin square: row (along the first gradient), 1-based
    int square_col = 0;          // Latin square: column (along the second gradient), 1-based
    int treatment = 0;
    int cell_row = 0;
    int cell_col = 0;
};

struct DesignAssignment {
    std::string design_id;                 // e.g. "latin/1": appended to the randomization algorithm id
    std::vector<BlockShape> shapes;        // shapes[b-1] for block b
    std::vector<DesignUnit> units;         // any order
    std::vector<std::string> columns;      // design columns worth listing in `plots`: "rep", "main", ...
};

}  // namespace pw
