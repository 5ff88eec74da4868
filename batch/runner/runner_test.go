package runner

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"sync/atomic"
	"testing"
	"time"
)

// jitter sleeps a pseudo-random few hundred microseconds so that jobs
// finish out of order.
func jitter(i int) {
	r := rand.New(rand.NewPCG(uint64(i), 7))
	time.Sleep(time.Duration(r.IntN(400)) * time.Microsecond)
}

func TestRunDeliversInOrderWhateverWorkers(t *testing.T) {
	const n = 500
	for _, workers := range []int{1, 2, 3, 8, 32} {
		t.Run(fmt.Sprint(workers), func(t *testing.T) {
			var got []int
			rep, err := Run(context.Background(), n, Options{Workers: workers},
				func(_ context.Context, i int) (int, error) { jitter(i); return i * i, nil },
				func(i, v int, err error) error {
					if err != nil || v != i*i {
						t.Fatalf("job %d: got %d, %v", i, v, err)
					}
					got = append(got, i)
					return nil
				})
			if err != nil {
				t.Fatal(err)
			}
			for k, i := range got {
				if i != k {
					t.Fatalf("delivery %d was job %d", k, i)
				}
			}
			if len(got) != n || rep.Done != n || rep.Failed+rep.Canceled+rep.NotRun != 0 {
				t.Fatalf("delivered %d, report %+v", len(got), rep)
			}
		})
	}
}

func TestRunBoundsOutstandingJobs(t *testing.T) {
	const n, workers, window = 2000, 4, 10
	var started, delivered, worst atomic.Int64
	_, err := Run(context.Background(), n, Options{Workers: workers, Window: window},
		func(_ context.Context, i int) (struct{}, error) {
			s := started.Add(1)
			if out := s - delivered.Load(); out > worst.Load() {
				worst.Store(out) // racy maximum, but each store is a real observation
			}
			if i%50 == 0 {
				time.Sleep(2 * time.Millisecond) // a slow job holds back delivery
			}
			return struct{}{}, nil
		},
		func(int, struct{}, error) error { delivered.Add(1); return nil })
	if err != nil {
		t.Fatal(err)
	}
	if w := worst.Load(); w > window {
		t.Fatalf("%d jobs outstanding, window is %d", w, window)
	}
}

func TestRunStopsAtLowestFailure(t *testing.T) {
	bad := map[int]bool{37: true, 90: true, 200: true}
	for _, workers := range []int{1, 2, 5, 16} {
		t.Run(fmt.Sprint(workers), func(t *testing.T) {
			var seen []int
			var errs int
			rep, err := Run(context.Background(), 300, Options{Workers: workers},
				func(_ context.Context, i int) (int, error) {
					jitter(i)
					if bad[i] {
						return 0, fmt.Errorf("diverged at %d", i)
					}
					return i, nil
				},
				func(i, _ int, err error) error {
					seen = append(seen, i)
					if err != nil {
						errs++
					}
					return nil
				})
			var je *JobError
			if !errors.As(err, &je) || je.Index != 37 || je.Err.Error() != "diverged at 37" {
				t.Fatalf("error %v, want job 37's", err)
			}
			if len(seen) != 38 || seen[37] != 37 || errs != 1 {
				t.Fatalf("sink saw %d jobs (%d failed), want 0..37 with one failure", len(seen), errs)
			}
			if rep.Jobs[37].State != Failed || rep.Done != 37 || rep.Failed != 1 || rep.NotRun != 300-38 {
				t.Fatalf("report: job 37 %v, counts %d/%d/%d", rep.Jobs[37].State, rep.Done, rep.Failed, rep.NotRun)
			}
		})
	}
}

func TestRunKeepGoingDeliversEveryJob(t *testing.T) {
	var failed []int
	n := 0
	rep, err := Run(context.Background(), 100, Options{Workers: 4, KeepGoing: true},
		func(_ context.Context, i int) (int, error) {
			jitter(i)
			if i%30 == 29 {
				return 0, errors.New("no convergence")
			}
			return i, nil
		},
		func(i, _ int, err error) error {
			if i != n {
				t.Fatalf("delivery %d was job %d", n, i)
			}
			n++
			if err != nil {
				failed = append(failed, i)
			}
			return nil
		})
	var je *JobError
	if !errors.As(err, &je) || je.Index != 29 {
		t.Fatalf("error %v, want job 29's", err)
	}
	if n != 100 || fmt.Sprint(failed) != "[29 59 89]" || rep.Failed != 3 || rep.Done != 97 {
		t.Fatalf("delivered %d, failed %v, report %d done %d failed", n, failed, rep.Done, rep.Failed)
	}
}

func TestRunCancelStopsPromptly(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var running atomic.Int64
	rep, err := Run(ctx, 10000, Options{Workers: 4},
		func(ctx context.Context, i int) (int, error) {
			running.Add(1)
			defer running.Add(-1)
			select {
			case <-ctx.Done():
				return 0, ctx.Err()
			case <-time.After(100 * time.Microsecond):
				return i, nil
			}
		},
		func(i, _ int, _ error) error {
			if i == 50 {
				cancel()
			}
			return nil
		})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	if running.Load() != 0 {
		t.Fatal("work still running after Run returned")
	}
	if rep.Done < 51 || rep.Done > 51+8*4 || rep.Done+rep.Canceled+rep.NotRun != 10000 {
		t.Fatalf("report after cancel: %d done, %d canceled, %d not run", rep.Done, rep.Canceled, rep.NotRun)
	}
}

func TestRunSinkErrorStops(t *testing.T) {
	full := errors.New("disk full")
	var calls atomic.Int64
	rep, err := Run(context.Background(), 1000, Options{Workers: 3},
		func(_ context.Context, i int) (int, error) { calls.Add(1); return i, nil },
		func(i, _ int, _ error) error {
			if i == 10 {
				return full
			}
			return nil
		})
	var se *SinkError
	if !errors.As(err, &se) || se.Index != 10 || !errors.Is(err, full) {
		t.Fatalf("error %v, want the sink's at job 10", err)
	}
	if c := calls.Load(); c > 11+8*3 {
		t.Fatalf("%d jobs computed after the sink failed at job 10 (window 24)", c)
	}
	if rep.Done != 11 {
		t.Fatalf("%d jobs reported done, want 11", rep.Done)
	}
}

func TestRunTurnsPanicIntoJobError(t *testing.T) {
	_, err := Run(context.Background(), 20, Options{Workers: 2},
		func(_ context.Context, i int) (int, error) {
			if i == 4 {
				var rows []int
				_ = rows[i] // index out of range: a runtime panic
			}
			return i, nil
		},
		func(int, int, error) error { return nil })
	var je *JobError
	if !errors.As(err, &je) || je.Index != 4 {
		t.Fatalf("error %v, want job 4's panic", err)
	}
}

func TestRunNoJobs(t *testing.T) {
	rep, err := Run(context.Background(), 0, Options{},
		func(context.Context, int) (int, error) { t.Fatal("work called"); return 0, nil },
		func(int, int, error) error { t.Fatal("sink called"); return nil })
	if err != nil || len(rep.Jobs) != 0 {
		t.Fatal(rep, err)
	}
}
