package formats

import (
	"math"
	"strings"

	"github.com/apache/arrow-go/v18/arrow/array"
)

// nullReasons collects the value columns of one row written as null
// because they hold no finite number (NaN or ±Inf never reach a file),
// and writes why into the row's null_reasons column (docs/FORMATS.md).
// The reason depends on the column only, so that a set read back and
// written again (merge) has the same bytes.
type nullReasons struct {
	table string
	cols  []string
}

// f64 appends x to b, or a null when x is not finite.
func (r *nullReasons) f64(b *array.Float64Builder, col string, x float64) {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		b.AppendNull()
		r.cols = append(r.cols, col)
		return
	}
	b.Append(x)
}

// flush appends the row's reasons to b (null when none) and resets r.
func (r *nullReasons) flush(b *array.StringBuilder) {
	if len(r.cols) == 0 {
		b.AppendNull()
		return
	}
	var order []string
	group := map[string][]string{}
	for _, c := range r.cols {
		why := nullReason(r.table, c)
		if _, ok := group[why]; !ok {
			order = append(order, why)
		}
		group[why] = append(group[why], c)
	}
	parts := make([]string, len(order))
	for k, why := range order {
		parts[k] = strings.Join(group[why], ", ") + ": " + why
	}
	b.Append(strings.Join(parts, "; "))
	r.cols = r.cols[:0]
}

// nullReason says why a value column can have no finite value.
func nullReason(table, col string) string {
	switch {
	case strings.HasPrefix(col, "worst_"):
		return "some state's error has no finite value"
	case strings.HasSuffix(col, "_err") || strings.HasSuffix(col, "_err_scaled"):
		return "an error needs a finite moment of both the chain and the process"
	case strings.HasPrefix(col, "true_"):
		return "the process has no finite moment of that order (a heavy-tailed innovation, such as Student's t with nu <= 4 for the kurtosis)"
	case table == TableSummary:
		return "the chain's stationary moment has no finite value"
	}
	return "the chain's conditional moment has no finite value (a row with all its mass on one point has no skewness or kurtosis)"
}
