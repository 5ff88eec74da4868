// Package runner computes independent jobs on a pool of goroutines and
// hands their results to a sink strictly in job order.
//
// Jobs are numbered 0..n-1. Workers take them in increasing order; a
// single goroutine (the caller's) delivers results to the sink in the same
// order, whatever the number of workers or the order in which jobs finish.
// So a sink that writes what it receives produces the same bytes with 1
// worker or 64.
//
// Memory stays bounded: at most Options.Window jobs are in flight or
// waiting for delivery at any time, so a sweep of 100,000 jobs holds a few
// dozen results, not 100,000.
//
// On the first failure (unless Options.KeepGoing is set) no further job is
// started; jobs already started finish and every job before the failing one
// is delivered. The error returned names the lowest failing job index,
// which does not depend on the number of workers when jobs are
// deterministic: every job before it was started, ran and succeeded.
package runner
