package bench

import (
	"runtime"
	"runtime/metrics"
	"syscall"
	"testing"
	"time"
)

// cpuTime returns the CPU time (user + system) the process has used.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// pTime reads the Go runtime's estimates of the time its Ps (the cores it
// may use, GOMAXPROCS) were idle and in all, in seconds. The runtime brings
// them up to date at the end of each garbage collection, so pTime collects
// first.
func pTime() (idle, total float64) {
	runtime.GC()
	s := []metrics.Sample{{Name: "/cpu/classes/idle:cpu-seconds"}, {Name: "/cpu/classes/total:cpu-seconds"}}
	metrics.Read(s)
	return s[0].Value.Float64(), s[1].Value.Float64()
}

// cpuMeter reports the process CPU time per operation as "cpu-ns/op",
// which stays steady when other jobs share the machine and stretch the
// wall clock, and the share of the Ps' time that they were idle for want
// of work ("idle-frac"): on a shared machine the operating system's
// preemptions count as busy, so the share shows how much of the cores a
// run leaves unused on its own account. On an idle machine with P cores
// the wall time would be about cpu-ns/op / (P × (1 − idle-frac)). Start
// it after the setup, stop it before b.N runs end.
type cpuMeter struct {
	start           time.Duration
	idle, available float64
}

func startCPU() cpuMeter {
	var m cpuMeter
	m.idle, m.available = pTime()
	m.start = cpuTime()
	return m
}

func (m cpuMeter) report(b *testing.B) {
	cpu := cpuTime() - m.start
	b.ReportMetric(float64(cpu.Nanoseconds())/float64(b.N), "cpu-ns/op")
	idle, available := pTime()
	if available > m.available {
		b.ReportMetric((idle-m.idle)/(available-m.available), "idle-frac")
	}
}
