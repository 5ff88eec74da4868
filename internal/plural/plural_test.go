package plural

import "testing"

func TestCount(t *testing.T) {
	for _, c := range []struct {
		n    int
		want string
	}{{0, "0 points"}, {1, "1 point"}, {2, "2 points"}, {50000, "50000 points"}} {
		if got := Count(c.n, "point", "points"); got != c.want {
			t.Errorf("Count(%d) = %q, want %q", c.n, got, c.want)
		}
	}
	if Noun(1, "job", "jobs") != "job" || Noun(3, "job", "jobs") != "jobs" {
		t.Error("Noun picks the wrong form")
	}
}
