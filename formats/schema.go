package formats

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
)

// Column names shared by several tables.
const (
	ColPoint       = "point"
	ColAge         = "age"
	ColFrom        = "from_state"
	ColTo          = "to_state"
	ColProbability = "probability"
	ColState       = "state"
	ColBaseline    = "baseline"
	ColStationary  = "stationary"
	ColInitial     = "initial"
	ColMatched     = "matched"
	ColSpecHash    = "spec_hash"
	ColChainHash   = "chain_hash"
	ColSpec        = "spec"
	ColAges        = "ages"
	ColMethod      = "method"
	ColParameter   = "parameter"
	ColQuantity    = "quantity"
	ColCoordinate  = "coordinate"
	ColDerivative  = "derivative"
	// Row shape and degenerate chains (issue 10).
	ColPriorKL         = "prior_kl"
	ColStranded        = "stranded_mass"
	ColFarFromUnimodal = "far_from_unimodal"
	ColFarStates       = "far_from_unimodal_states"
	ColDegenerate      = "degenerate"
	// ColNullReasons says why the value columns of a row that are null
	// have no finite value.
	ColNullReasons = "null_reasons"
)

// Quantities of the sensitivities table: what a row differentiates.
const (
	QuantityGrid       = "grid"       // x_{state, coordinate}
	QuantityTransition = "transition" // P_{state, to_state}
	QuantityStationary = "stationary" // π_state
)

// ParamColumn returns the points-table column holding a swept parameter.
func ParamColumn(name string) string { return "param_" + name }

// LevelColumn returns the column holding dimension k of a state's level.
func LevelColumn(k int) string { return fmt.Sprintf("x%d", k) }

// momentNames are the four conditional moments in column order.
var momentNames = [4]string{"mean", "variance", "skewness", "kurtosis"}

// summaryNames are the unconditional moments in column order.
var summaryNames = [5]string{"mean", "sd", "skewness", "kurtosis", "autocorrelation"}

// diagnosticMomentColumns names the 16 moment columns of the diagnostics
// table in order: chain_*, true_*, *_err, *_err_scaled.
func diagnosticMomentColumns() []string {
	var out []string
	for _, prefix := range []string{"chain_", "true_"} {
		for _, m := range momentNames {
			out = append(out, prefix+m)
		}
	}
	for _, suffix := range []string{"_err", "_err_scaled"} {
		for _, m := range momentNames {
			out = append(out, m+suffix)
		}
	}
	return out
}

// summaryMomentColumns names the 14 moment columns of the summary table
// in order: chain_*, true_*, worst_*_err_scaled.
func summaryMomentColumns() []string {
	var out []string
	for _, prefix := range []string{"chain_", "true_"} {
		for _, m := range summaryNames {
			out = append(out, prefix+m)
		}
	}
	for _, m := range momentNames {
		out = append(out, "worst_"+m+"_err_scaled")
	}
	return out
}

func field(name string, t arrow.DataType, nullable bool) arrow.Field {
	return arrow.Field{Name: name, Type: t, Nullable: nullable}
}

var (
	i32     = arrow.PrimitiveTypes.Int32
	f64     = arrow.PrimitiveTypes.Float64
	str     = arrow.BinaryTypes.String
	boolean = arrow.FixedWidthTypes.Boolean
)

func levelFields(dim int) []arrow.Field {
	fs := make([]arrow.Field, dim)
	for k := range fs {
		fs[k] = field(LevelColumn(k), f64, false)
	}
	return fs
}

// schemaFor returns the schema (without metadata) of a table.
func schemaFor(table string, dim int, params []string) *arrow.Schema {
	var fs []arrow.Field
	switch table {
	case TablePoints:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAges, i32, false),
			field(ColSpecHash, str, false), field(ColChainHash, str, false), field(ColSpec, str, false)}
		for _, p := range params {
			fs = append(fs, field(ParamColumn(p), f64, false))
		}
	case TableTransitions, TableBaseline:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAge, i32, false),
			field(ColFrom, i32, false), field(ColTo, i32, false), field(ColProbability, f64, false)}
	case TableStates:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAge, i32, false), field(ColState, i32, false)}
		fs = append(fs, levelFields(dim)...)
		fs = append(fs, field(ColStationary, f64, true), field(ColInitial, f64, true), field(ColMatched, i32, false))
	case TableDiagnostics:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAge, i32, false),
			field(ColBaseline, boolean, false), field(ColState, i32, false)}
		fs = append(fs, levelFields(dim)...)
		fs = append(fs, field(ColStationary, f64, true), field(ColMatched, i32, false))
		for _, name := range diagnosticMomentColumns() {
			fs = append(fs, field(name, f64, true))
		}
		fs = append(fs, field(ColVecMeanErr, f64, true), field(ColVecCovErr, f64, true))
		fs = append(fs, field(ColPriorKL, f64, true), field(ColStranded, f64, true), field(ColFarFromUnimodal, boolean, true),
			field(ColNullReasons, str, true))
	case TableSummary:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAge, i32, false),
			field(ColBaseline, boolean, false), field(ColMethod, str, false),
			field("states", i32, false), field("moments", i32, true), field("fallbacks", i32, false)}
		for _, name := range summaryMomentColumns() {
			fs = append(fs, field(name, f64, true))
		}
		fs = append(fs, field("stationary_error", str, true))
		fs = append(fs, field(ColWorstVecMeanErr, f64, true), field(ColWorstVecCovErr, f64, true), field(ColStationaryCovErr, f64, true))
		for _, prefix := range []string{"true", "chain"} {
			for k := 0; k < dim; k++ {
				fs = append(fs, field(MeanColumn(prefix, k), f64, true))
			}
		}
		for _, prefix := range []string{"true", "chain"} {
			for k := 0; k < dim; k++ {
				for l := 0; l < dim; l++ {
					fs = append(fs, field(CovColumn(prefix, k, l), f64, true))
				}
			}
		}
		fs = append(fs, field(ColDegenerate, str, true), field(ColFarStates, i32, false), field(ColNullReasons, str, true))
	case TableSensitivities:
		fs = []arrow.Field{field(ColPoint, i32, false), field(ColAge, i32, false),
			field(ColParameter, str, false), field(ColQuantity, str, false), field(ColState, i32, false),
			field(ColTo, i32, true), field(ColCoordinate, i32, true), field(ColDerivative, f64, false)}
	default:
		panic("formats: unknown table " + table)
	}
	return arrow.NewSchema(fs, nil)
}

// sameColumns reports the first difference in column names and types
// between a file's schema and the expected one (nullability is ignored:
// Parquet round trips may change it).
func sameColumns(got, want *arrow.Schema) error {
	if got.NumFields() != want.NumFields() {
		return fmt.Errorf("has %d columns, want %d", got.NumFields(), want.NumFields())
	}
	for i, w := range want.Fields() {
		g := got.Field(i)
		if g.Name != w.Name {
			return fmt.Errorf("column %d is %q, want %q", i, g.Name, w.Name)
		}
		if !arrow.TypeEqual(g.Type, w.Type) {
			return fmt.Errorf("column %q has type %s, want %s", g.Name, g.Type, w.Type)
		}
	}
	return nil
}
