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
// # Row shapes
//
// Matching moments exactly says nothing about a row's shape, and rows
// pushed towards the hull's edge can take shapes no modeller expects. Two
// diagnostics describe every row (StateCheck):
//
// PriorKL, the Kullback-Leibler divergence Σ_j p_ij log(p_ij / q_ij) of
// the row from the prior weights q_i it started from (Chain.PriorKL): 0
// where the node rule alone carries the moments, growing as the
// multipliers bend the row.
//
// Shape, a test of unimodality. Order the row's points by level and take
// its mode m (the first largest probability). On each side of m, a point
// j is a valley when
//
//	p_j < ValleyRatio · max{p_k : k beyond j, on the same side}   (ValleyRatio = 0.1),
//
// and every point beyond a side's innermost valley is stranded. The
// stranded mass is the probability of all stranded points; the row is
// far from unimodal when it is at least StrandedFlag = 1e-8, the floor at
// which issue 10's linear-programming check counts a probability. A
// unimodal row (never rising going outward from its mode) has none. The
// test catches both shapes of issue 10: two separated peaks (25 lattice
// points, ρ 0.9, four moments: row 0 is 0.422, 0.022, 0.490, 0.066, …,
// whose point 0 lies beyond the valley at point 1) and mass far from the
// mean behind near-zero probabilities (a lognormal on 15 points puts
// 0.050 on its top point behind weights of 1e-18, and persistent AR(1)
// rows jump twelve states with probability 1e-7 behind 1e-40). The
// baselines of Rouwenhorst and Tauchen have unimodal rows by construction
// and are never flagged. Vector chains have no single order of levels and
// get PriorKL only.
//
// # Matching policies
//
// The per-state solve is a matchPolicy (statesolve.go), chosen by
// Settings.Matching. MatchExact (exactMatch) is the published method:
// exact moment constraints, fewer moments where a proof says the grid
// cannot carry them. Its chains jump where a state changes level as a
// parameter moves (jumps of 1e-3 to 0.4 in a transition probability as ρ
// crosses 0.9 to 0.999 with 4 moments), which an estimator that moves
// the parameters feels as steps and cliffs in its objective.
//
// MatchSmooth (smoothMatch) minimizes, in every state and at the
// requested level,
//
//	F(λ) = log Σ_j q_j exp(λ·dev_j) + Σ_k c_k (cosh(λ_k/b_k) − 1),
//
// the maximum-entropy dual plus a penalty on the multipliers. F is
// strictly convex and coercive for any target, inside the moment hull or
// not, so its minimizer is unique and, by the implicit function theorem,
// an analytic function of the grid and the prior: the chain is a smooth
// function of every process parameter that moves them smoothly. Its dual
// is the Kullback-Leibler projection with the moment constraints replaced
// by a penalty on the moment errors (the relaxed, regularized maximum
// entropy of Dudík, Phillips and Schapire 2007; as a penalty it is an
// exact-penalty function in the sense of Fletcher 1987, ch. 14, made
// smooth). The moment error at the solution is −(c_k/b_k) sinh(λ_k/b_k):
// below 1e-11 while the multipliers are moderate, as they are wherever
// the target has a clear margin inside the hull, so that there the two
// policies agree to about 1e-11. Beyond the hull the errors grow
// continuously instead of moments being dropped; b_k scales with the
// moment's order so that the higher moments give way first. The levels
// and certificates reported are those matched to 1e-9 (CertRelaxed for a
// state that gave some moments up), and the diagnostics show every error.
// On grids far coarser than the shock (a few points per conditional
// standard deviation are needed; ρ near 1 on 9 points has less) the
// trade can cost the variance a large error where the exact policy would
// keep mean and variance and drop the rest: read the diagnostics, or ask
// for 2 moments. Vector grids on principal axes turn with the stationary
// covariance and flip where its eigenvalues cross; coordinate axes keep a
// VAR's grid smooth in its parameters.
//
// Defaults: MatchExact everywhere (the command line, manifests, sweeps),
// because it is the published method whose numbers users compare with
// papers, and its chains have been recorded by hash since the first
// release; MatchSmooth is for estimation, where an optimizer moves the
// parameters, and must be asked for (matching: smooth). Chains that carry
// parameter sensitivities (AR1.Sensitivities in mean, ρ and σ;
// VAR.Sensitivities in every intercept, coefficient and covariance entry;
// IID.Sensitivities in every parameter of a normal, log-normal, Student t
// or Laplace law; ProductSensitivities for products of these) are exact
// derivatives of whichever policy built them;
// under MatchExact they exist only where no state changes level, and on
// principal axes only where the stationary covariance has distinct
// eigenvalues. Other kinds and laws (stochastic volatility, life cycles;
// beta and mixture laws) have none yet: their manifests are refused
// naming the field.
//
// The classic methods of Tauchen (1986), Tauchen and Hussey (1991) with the
// Flodén (2008) weighting, Rouwenhorst (1995; Kopecky and Suen 2010) and the
// equal-probability intervals of Adda and Cooper (2003) are provided as
// baselines.
//
// The package is pure: values in, values out, no files, flags or logging.
//
// # Same numbers on every machine
//
// Chains are bit-identical on amd64 and arm64 (docs/HASHES.md; nothing
// below is specific to either, so other targets should agree too), which
// two rules keep; internal/fusecheck fails the suite when code in this
// package or in manifests breaks either:
//
//   - Every floating-point product that is not an operand of another * or
//     /, or of a comparison, is written float64(a*b): so a*b + c becomes
//     float64(a*b) + c, s += a*b becomes s += float64(a*b), and x *= y
//     becomes x = float64(x * y). Go may fuse a*b + c into one fused
//     multiply-add, even across statements and inlined calls, and does on
//     arm64 but not on amd64; an explicit conversion rounds the product and
//     forbids it. go test ./internal/fusecheck -fix wraps what it finds.
//   - Elementary and special functions come from
//     gridstage/internal/portablemath (Exp, Log, Pow, Erfc, Lgamma,
//     NormalQuantile, BetaRegularized, ...); from package math only the
//     exact ones (Sqrt, Abs, Floor, Max, Frexp, ...), since the others are
//     assembly on amd64 or arm64 or compiled with fusion.
//
// Library code is held to the same rules: gonum's distributions and
// linear algebra are not used on the hash path (linalg.go has the
// eigenvalue and LU routines the solver needs); internal/fusecheck refuses
// imports beyond the standard library except a listed few, each with its
// reason.
package solver
