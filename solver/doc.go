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
// is solved by Newton's method in log space. Where the full moment set is
// infeasible in a state the solver matches fewer moments and records how many.
//
// The classic methods of Tauchen (1986), Tauchen and Hussey (1991) with the
// Flodén (2008) weighting, and Rouwenhorst (1995; Kopecky and Suen 2010) are
// provided as baselines.
//
// The package is pure: values in, values out, no files, flags or logging.
package solver
