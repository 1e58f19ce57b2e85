package engine_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestUntypedLateCell: a column without a declared type is read as the type
// inferred from the first rows; a later cell that does not fit stops the run
// with the file, line and column, since no type rule would count it. With
// the type declared, the type rule counts the same cell.
func TestUntypedLateCell(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "late.csv")
	if err := os.WriteFile(data, []byte("n,m\n1,1\n2,2\n3,3\n4,abc\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	opts := engine.Options{Source: source.Options{SampleRows: 2}}
	tests := []struct {
		name, policy string
		wantErr      string // "" when the run must succeed
		wantRows     int64  // rows the type rule counts when it succeeds
	}{
		{"inferred", "policy: p\ncolumns:\n  m: {maximum: 10}\n",
			data + `:5: column "m": "abc" does not fit the type integer inferred from the first rows of the file; ` +
				"declare the column's type in the policy (its type rule then counts such cells)", 0},
		{"declared", "policy: p\ncolumns:\n  m: {type: integer, maximum: 10}\n", "", 1},
		{"not read", "policy: p\ncolumns:\n  n: {maximum: 10}\n", "", 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pol, err := rules.Parse("p.yaml", []byte(tt.policy))
			if err != nil {
				t.Fatal(err)
			}
			rep, err := engine.Run(context.Background(), pol, []string{data}, opts)
			if tt.wantErr != "" {
				var se *source.Error
				if err == nil || err.Error() != tt.wantErr || !errors.As(err, &se) || se.Column != "m" {
					t.Fatalf("got error %v\nwant %s", err, tt.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			for _, res := range rep.Results {
				if res.Check == "type" && (res.Offending == nil || res.Offending.Count != tt.wantRows) {
					t.Errorf("%s: offending %+v, want %d rows", res.ID, res.Offending, tt.wantRows)
				}
			}
		})
	}
}
