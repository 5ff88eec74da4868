package shard

import (
	"fmt"
	"strings"
	"testing"
)

func TestShardsPartitionJobs(t *testing.T) {
	for _, n := range []int{0, 1, 5, 17, 100} {
		for _, count := range []int{1, 2, 3, 4, 7, 150} {
			seen := make([]int, n)
			sizes := []int{}
			for i := 1; i <= count; i++ {
				s := Shard{Index: i, Count: count}
				jobs := s.Jobs(n)
				sizes = append(sizes, len(jobs))
				for k, j := range jobs {
					if k > 0 && j <= jobs[k-1] {
						t.Fatalf("%v of %d jobs: not increasing: %v", s, n, jobs)
					}
					if !s.Owns(j) {
						t.Fatalf("%v lists job %d but does not own it", s, j)
					}
					seen[j]++
				}
			}
			for j, c := range seen {
				if c != 1 {
					t.Fatalf("%d jobs in %d shards: job %d in %d shards", n, count, j, c)
				}
			}
			lo, hi := sizes[0], sizes[0]
			for _, s := range sizes {
				lo, hi = min(lo, s), max(hi, s)
			}
			if hi-lo > 1 {
				t.Fatalf("%d jobs in %d shards: sizes %v differ by more than one", n, count, sizes)
			}
		}
	}
}

func TestParse(t *testing.T) {
	for _, ok := range []struct {
		in   string
		want Shard
	}{{"1/1", All}, {"2/8", Shard{2, 8}}, {" 8/8 ", Shard{8, 8}}} {
		s, err := Parse(ok.in)
		if err != nil || s != ok.want {
			t.Errorf("Parse(%q) = %v, %v", ok.in, s, err)
		}
	}
	for _, bad := range []string{"", "3", "0/4", "5/4", "-1/4", "1/0", "a/b", "1/2/3", "1.5/2"} {
		if _, err := Parse(bad); err == nil || !strings.Contains(err.Error(), "want") {
			t.Errorf("Parse(%q): error %v", bad, err)
		}
	}
}

func env(m map[string]string) func(string) string {
	return func(k string) string { return m[k] }
}

func TestFromSlurm(t *testing.T) {
	cases := []struct {
		vars  map[string]string
		want  Shard
		isArr bool
		err   string
	}{
		{vars: nil, isArr: false},
		{vars: map[string]string{EnvTaskID: "0", EnvTaskMin: "0", EnvTaskMax: "3", EnvTaskCount: "4"}, want: Shard{1, 4}, isArr: true},
		{vars: map[string]string{EnvTaskID: "3", EnvTaskMin: "0", EnvTaskMax: "3", EnvTaskCount: "4"}, want: Shard{4, 4}, isArr: true},
		{vars: map[string]string{EnvTaskID: "5", EnvTaskMin: "1", EnvTaskMax: "8", EnvTaskCount: "8"}, want: Shard{5, 8}, isArr: true},
		{vars: map[string]string{EnvTaskID: "7", EnvTaskMin: "1", EnvTaskMax: "9", EnvTaskStep: "2", EnvTaskCount: "5"}, want: Shard{4, 5}, isArr: true},
		{vars: map[string]string{EnvTaskID: "7", EnvTaskMin: "1", EnvTaskMax: "9", EnvTaskCount: "3"}, isArr: true, err: "evenly spaced"},
		{vars: map[string]string{EnvTaskID: "2", EnvTaskMin: "1", EnvTaskMax: "9", EnvTaskStep: "2", EnvTaskCount: "5"}, isArr: true, err: "not in"},
		{vars: map[string]string{EnvTaskID: "2"}, isArr: true, err: "SLURM_ARRAY_TASK_MIN is not"},
		{vars: map[string]string{EnvTaskID: "x", EnvTaskMin: "0", EnvTaskCount: "2"}, isArr: true, err: "not an integer"},
	}
	for _, c := range cases {
		s, isArr, err := FromSlurm(env(c.vars))
		got := fmt.Sprint(err)
		if c.err == "" && err != nil || c.err != "" && !strings.Contains(got, c.err) {
			t.Errorf("%v: error %v, want %q", c.vars, err, c.err)
			continue
		}
		if s != c.want || isArr != c.isArr {
			t.Errorf("%v: %v %v, want %v %v", c.vars, s, isArr, c.want, c.isArr)
		}
	}
}

func TestResolvePrefersFlag(t *testing.T) {
	slurm := env(map[string]string{EnvTaskID: "1", EnvTaskMin: "0", EnvTaskMax: "3", EnvTaskCount: "4"})
	for _, c := range []struct {
		flag string
		want Shard
	}{{"", Shard{2, 4}}, {"3/5", Shard{3, 5}}, {"all", All}} {
		s, err := Resolve(c.flag, slurm)
		if err != nil || s != c.want {
			t.Errorf("Resolve(%q) = %v, %v; want %v", c.flag, s, err, c.want)
		}
	}
	if s, err := Resolve("", env(nil)); err != nil || s != All {
		t.Errorf("no flag, no Slurm: %v %v", s, err)
	}
}

func TestStampRoundTrip(t *testing.T) {
	dir := t.TempDir()
	if _, _, err := ReadStamp(dir); err == nil || !strings.Contains(err.Error(), "no shard.json") {
		t.Fatalf("no stamp: %v", err)
	}
	if err := WriteStamp(dir, Shard{3, 4}, "abc", 10); err != nil {
		t.Fatal(err)
	}
	st, s, err := ReadStamp(dir)
	if err != nil || s != (Shard{3, 4}) || st.ManifestHash != "abc" || st.Jobs != 10 || st.ShardJobs != 2 {
		t.Fatalf("read back %+v %v %v", st, s, err)
	}
}
