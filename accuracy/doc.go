// Package accuracy measures how well a Markov chain reproduces the
// first-order (vector) autoregression it approximates, the way an applied
// economist would notice: by estimating the process from data.
//
// For each chain it computes the VAR implied exactly by the chain's
// stationary distribution (population least squares of x' on (1, x) under
// π, no simulation), and the finite-sample bias and mean squared error of
// ordinary least squares on long seeded samples simulated from the chain.
// Samples simulated from the true VAR give the sampling-noise floor that no
// discretization can remove.
package accuracy
