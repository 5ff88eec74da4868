package runner

import (
	"context"
	"errors"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// Options tune a run. The zero value uses every core and the default
// window, and stops at the first failure.
type Options struct {
	// Workers is the number of jobs computed at once; 0 means
	// runtime.GOMAXPROCS(0), the cores this process may use.
	Workers int
	// Window bounds the jobs in flight or waiting for delivery; memory is
	// proportional to it. 0 means max(8×Workers, 16); a value below Workers
	// is raised to Workers.
	Window int
	// KeepGoing runs every job even after failures; each failed job is
	// still handed to the sink (with its error) in order.
	KeepGoing bool
}

func (o Options) workers() int {
	if o.Workers > 0 {
		return o.Workers
	}
	return runtime.GOMAXPROCS(0)
}

func (o Options) window(workers int) int {
	w := o.Window
	if w <= 0 {
		w = max(8*workers, 16)
	}
	return max(w, workers)
}

// Work computes job i. It may run on any goroutine, concurrently with
// other jobs; it should return promptly with ctx's error once ctx is done.
type Work[T any] func(ctx context.Context, i int) (T, error)

// Sink receives job i's result, in job order, on the goroutine that called
// Run: it needs no locking. err is the job's error for a failed job (v is
// then whatever Work returned). A non-nil return stops the run.
type Sink[T any] func(i int, v T, err error) error

type result[T any] struct {
	i       int
	v       T
	err     error
	elapsed time.Duration
	ok      bool // slot holds a result
}

// Run computes jobs 0..n-1 with work and hands each result to sink in job
// order. It returns when every started job has returned; no work runs
// after it returns.
//
// The error is nil when every job succeeded and was delivered; a
// *JobError for the lowest failing job; a *SinkError when the sink failed;
// or the context's error (wrapped) when ctx was canceled first. The report
// has one Status per job in every case.
func Run[T any](ctx context.Context, n int, opt Options, work Work[T], sink Sink[T]) (*Report, error) {
	if n < 0 {
		panic("runner: negative job count")
	}
	rep := &Report{Jobs: make([]Status, n)}
	if n == 0 {
		return rep, nil
	}
	workers := min(opt.workers(), n)
	window := opt.window(workers)

	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()

	// limit is one past the highest job that may still start: it drops to
	// f+1 when job f fails, so jobs after a failure are not started while
	// the jobs before it finish.
	var limit atomic.Int64
	limit.Store(int64(n))

	tokens := make(chan struct{}, window)
	indices := make(chan int)
	results := make(chan result[T], window)

	go func() {
		defer close(indices)
		for i := 0; i < n; i++ {
			select {
			case tokens <- struct{}{}:
			case <-runCtx.Done():
				return
			}
			if runCtx.Err() != nil || int64(i) >= limit.Load() {
				return
			}
			select {
			case indices <- i:
			case <-runCtx.Done():
				return
			}
		}
	}()

	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range indices {
				start := time.Now()
				v, err := call(runCtx, work, i)
				if err != nil && !opt.KeepGoing {
					lowerLimit(&limit, int64(i)+1)
				}
				// Never blocks: at most window jobs are outstanding.
				results <- result[T]{i: i, v: v, err: err, elapsed: time.Since(start), ok: true}
			}
		}()
	}
	go func() {
		wg.Wait()
		close(results)
	}()

	ring := make([]result[T], window)
	next := 0
	var runErr, firstFailure error
	stopped := false
	stop := func(err error) {
		if !stopped {
			stopped, runErr = true, err
			cancel()
		}
	}
	for r := range results {
		rep.Jobs[r.i].Elapsed = r.elapsed
		if stopped {
			continue // drained: the run is over
		}
		ring[r.i%window] = r
		for next < n && ring[next%window].ok {
			slot := &ring[next%window]
			cur := *slot
			*slot = result[T]{}
			if cur.err != nil && ctx.Err() != nil && errors.Is(cur.err, ctx.Err()) {
				rep.Jobs[next].State, rep.Jobs[next].Err = Canceled, cur.err
				stop(fmt.Errorf("runner: canceled after %d of %d jobs: %w", next, n, ctx.Err()))
				break
			}
			if cur.err != nil {
				rep.Jobs[next].State, rep.Jobs[next].Err = Failed, cur.err
				if firstFailure == nil {
					firstFailure = &JobError{Index: next, Err: cur.err}
				}
			} else {
				rep.Jobs[next].State = Done
			}
			if err := sink(next, cur.v, cur.err); err != nil {
				stop(&SinkError{Index: next, Err: err})
				next++
				break
			}
			next++
			<-tokens
			if cur.err != nil && !opt.KeepGoing {
				stop(firstFailure)
				break
			}
		}
	}
	if !stopped && next < n && ctx.Err() != nil {
		runErr = fmt.Errorf("runner: canceled after %d of %d jobs: %w", next, n, ctx.Err())
	}
	if runErr == nil {
		runErr = firstFailure
	}
	rep.count()
	return rep, runErr
}

// call runs one job, turning a panic into an error so that a bad job
// fails alone instead of bringing down the process.
func call[T any](ctx context.Context, work Work[T], i int) (v T, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("panic: %v", p)
		}
	}()
	return work(ctx, i)
}

func lowerLimit(limit *atomic.Int64, to int64) {
	for {
		cur := limit.Load()
		if to >= cur || limit.CompareAndSwap(cur, to) {
			return
		}
	}
}

func (r *Report) count() {
	for _, s := range r.Jobs {
		switch s.State {
		case Done:
			r.Done++
		case Failed:
			r.Failed++
		case Canceled:
			r.Canceled++
		default:
			r.NotRun++
		}
	}
}
