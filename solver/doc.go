// Package solver turns continuous shock processes into finite Markov chains.
//
// The core method is maximum-entropy moment matching (Tanaka and Toda 2013,
// 2015; Farmer and Toda 2017): in every current state i a quadrature rule
// gives prior weights
//
//	q_ij ∝ w_j f(x_j | x_i),
//
// and the transition probabilities are the distribution closest to q in
// Kullback-Leibler divergence whose first L conditional moments equal those
// of the true process. The convex dual
//
//	min_λ log Σ_j q_ij exp(λ·(T(x_j) − T̄_i))
//
// is solved by Newton's method in log space, with a step cap on rising
// log-probabilities, a centred Hessian where the one-pass form cancels and
// Levenberg-Marquardt damping where it is singular, so that targets close
// to the hull's boundary converge too. Where the full moment set is
// infeasible in a state the solver matches fewer moments, records how many,
// and records the proof (Certificate): a direction that separates the
// target from every row with all probabilities at least 1e-9 (a facet of
// the cyclic polytope for power moments, Wolfe's minimum-norm point for
// vector moments, or the direction Newton diverged along), checked with
// rounding bounds. A state never falls back without one; were the proof
// missing the state would say "unproven".
//
// Symmetric problems (a symmetric innovation on a grid symmetric about the
// mean, and Gaussian VARs on their tensor grids) are solved for one half of
// the states; the other half are exact mirrors.
//
// The per-state solve is a matchPolicy (statesolve.go): exactMatch is the
// maximum-entropy policy with exact moment constraints.
//
// The classic methods of Tauchen (1986), Tauchen and Hussey (1991) with the
// Flodén (2008) weighting, Rouwenhorst (1995; Kopecky and Suen 2010) and the
// equal-probability intervals of Adda and Cooper (2003) are provided as
// baselines.
//
// The package is pure: values in, values out, no files, flags or logging.
package solver
