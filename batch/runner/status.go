package runner

import (
	"fmt"
	"time"
)

// State is what became of one job.
type State uint8

const (
	// NotRun: the job was not delivered because the run stopped first (it
	// may have been computed; then Status.Elapsed is non-zero).
	NotRun State = iota
	// Done: the job succeeded and its result was delivered.
	Done
	// Failed: the job returned an error.
	Failed
	// Canceled: the job was started but returned the context's error after
	// the run was canceled.
	Canceled
)

func (s State) String() string {
	switch s {
	case NotRun:
		return "not-run"
	case Done:
		return "done"
	case Failed:
		return "failed"
	case Canceled:
		return "canceled"
	}
	return fmt.Sprintf("State(%d)", uint8(s))
}

// Status records one job for a run record.
type Status struct {
	State State
	// Err is the job's error when State is Failed or Canceled.
	Err error
	// Elapsed is the time the job's work function took (zero if not run).
	Elapsed time.Duration
}

// Report summarises a run: one Status per job, in job order.
type Report struct {
	Jobs []Status
	// Done, Failed, Canceled and NotRun count the jobs in each state.
	Done, Failed, Canceled, NotRun int
}

// JobError is a job's failure, with its index.
type JobError struct {
	Index int
	Err   error
}

func (e *JobError) Error() string { return fmt.Sprintf("job %d: %v", e.Index, e.Err) }
func (e *JobError) Unwrap() error { return e.Err }

// SinkError is a failure of the sink while it handled the result of job
// Index; the run stops at once.
type SinkError struct {
	Index int
	Err   error
}

func (e *SinkError) Error() string {
	return fmt.Sprintf("writing result of job %d: %v", e.Index, e.Err)
}
func (e *SinkError) Unwrap() error { return e.Err }
