// Package figures computes the data behind every picture of a Markov chain
// and renders it with gonum/plot.
//
// Each figure has two halves: a plain data value (what is plotted, in the
// units of the process) computed by a pure function, and a drawing made from
// that value alone. Tests assert on the data; the drawing adds only style.
// Nothing here modifies the chains it is given.
//
// Figures per chain:
//
//   - Mass: the grid with the stationary distribution as bars and the true
//     stationary law as the probability it assigns to each grid cell.
//   - Flow: the transition matrix as a heat map.
//   - Errors: per-state conditional-moment errors on a log scale, the chain
//     beside its baseline, states that fell back marked.
//   - Plane: for vector chains, the states in the plane of the first two
//     components sized by stationary probability, with the principal axes
//     of the stationary covariance.
//   - Ages: for life-cycle chains, the grid and the probability mass by age.
package figures
