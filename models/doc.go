// Package models solves small dynamic economic models on a finite Markov
// chain: the reference problems a downstream solver stage runs on the chains
// gridstage writes, each with a closed form to check against.
//
//   - Burnside (1998): the price-dividend ratio of a Lucas tree whose
//     dividend growth follows the chain, by one linear solve.
//   - Brock and Mirman (1972): stochastic growth with log utility and full
//     depreciation, by value-function iteration on a capital grid; the
//     optimal policy k' = αβ z k^α is known in closed form on any chain.
//   - A consumption-savings problem with a borrowing limit and CRRA utility,
//     income following the chain, by the endogenous grid method of Carroll
//     (2006), with the stationary wealth distribution by the histogram method
//     of Young (2010).
//
// The package is pure: values in, values out, no files, flags or logging.
// Chains are univariate; their levels are logarithms (of dividend growth
// factors, productivity or income).
package models
