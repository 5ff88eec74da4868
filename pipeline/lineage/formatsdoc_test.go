package lineage

import (
	"fmt"
	"regexp"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"gridstage/internal/docblock"
)

// TestFormatsDocLedger checks the ledger layout docs/FORMATS.md describes
// against the code that writes it: every column with its type, in order;
// the metadata keys and values; created_by; and the columns of layout
// version 1.
func TestFormatsDocLedger(t *testing.T) {
	const doc, heading = "docs/FORMATS.md", "### Ledger"
	tables := docblock.Tables(t, doc, heading)
	if len(tables) != 2 {
		t.Fatalf("%s, %q: %d tables, want the columns and the metadata", doc, heading, len(tables))
	}
	cols := tables[0]
	if len(cols) != len(columns) {
		t.Errorf("%s lists %d ledger columns, the code writes %d", doc, len(cols), len(columns))
	}
	for i, c := range columns {
		if i < len(cols) {
			if got, want := cols[i][0]+" "+cols[i][1], c.Name+" "+docType(c.Type); got != want {
				t.Errorf("%s, ledger column %d: %q, the code writes %q", doc, i+1, got, want)
			}
		}
	}
	meta := map[string]string{}
	for _, r := range tables[1] {
		value, _, _ := strings.Cut(strings.TrimPrefix(r[1], "`"), "`")
		meta[r[0]] = value
	}
	if len(meta) != 2 || meta[metaKind] != kindLedger || meta[metaVersion] != LedgerVersion {
		t.Errorf("%s: ledger metadata %v, the code writes %s = %s and %s = %s", doc, meta, metaKind, kindLedger, metaVersion, LedgerVersion)
	}
	text := docblock.Section(t, doc, heading)
	if !strings.Contains(text, "`created_by` is `"+createdBy+"`") {
		t.Errorf("%s does not give the ledger's created_by, %q", doc, createdBy)
	}
	m := regexp.MustCompile(`Version 1 had the first (\d+) columns only \(no\s+` + "`numeric_version`" + `\)`).FindStringSubmatch(text)
	if m == nil || m[1] != fmt.Sprint(len(columnsV1)) || columns[len(columnsV1)].Name != "numeric_version" {
		t.Errorf("%s: version 1's columns are not described as the first %d (no numeric_version)", doc, len(columnsV1))
	}
}

// docType names an Arrow type as docs/FORMATS.md does.
func docType(dt arrow.DataType) string {
	switch dt := dt.(type) {
	case *arrow.StringType:
		return "string"
	case *arrow.Int32Type:
		return "int32"
	case *arrow.TimestampType:
		if dt.Unit == arrow.Microsecond {
			return "timestamp (µs, " + dt.TimeZone + ")"
		}
	}
	return dt.String()
}
