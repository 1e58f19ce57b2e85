package source

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

// TestScanText checks that ScanText keeps every CSV cell as written (null
// tokens, numbers in their own spelling, cells that did not parse, quoted
// line breaks), in the order of the columns asked for, that Scan keeps
// none, and that batches report how far into their file they are.
func TestScanText(t *testing.T) {
	data := "id,x,note\n" +
		"1,29.0,plain\n" +
		"2,NA,\"two\nlines\"\n" +
		"3,abc,\"say \"\"hi\"\"\"\n" +
		"4,+1e2,\n"
	for _, tt := range []struct {
		name string
		data string
		size int64
	}{
		{"plain", data, int64(len(data))},
		{"gzip", gz(t, data), -1},
	} {
		t.Run(tt.name, func(t *testing.T) {
			mem := checkedMem(t)
			paths := writeFiles(t, t.TempDir(), []inFile{{"in.csv", tt.data}})
			s, err := Open(paths, Options{Allocator: mem, BatchRows: 3, Types: map[string]arrow.DataType{"x": tFloat64}})
			if err != nil {
				t.Fatal(err)
			}
			defer s.Close()
			if tt.size < 0 {
				tt.size = int64(len(tt.data))
			}
			if got := s.Files()[0].Size; got != tt.size {
				t.Errorf("Size %d, want %d", got, tt.size)
			}
			var rows []string
			var offsets []int64
			err = s.ScanText(context.Background(), []string{"note", "x"}, func(b *Batch) error {
				if len(b.Text) != 2 {
					return fmt.Errorf("batch has %d text columns, want 2", len(b.Text))
				}
				for i := range int(b.Record.NumRows()) {
					rows = append(rows, fmt.Sprintf("%q|%q", b.Text[0].Value(i), b.Text[1].Value(i)))
				}
				offsets = append(offsets, b.Offset)
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			want := `"plain"|"29.0" "two\nlines"|"NA" "say \"hi\""|"abc" ""|"+1e2"`
			if got := strings.Join(rows, " "); got != want {
				t.Errorf("texts\n got %s\nwant %s", got, want)
			}
			if len(offsets) != 2 || offsets[0] <= 0 || offsets[0] > offsets[1] || offsets[1] != tt.size {
				t.Errorf("offsets %v, want two, rising to the file's %d bytes", offsets, tt.size)
			}
			err = s.Scan(context.Background(), nil, func(b *Batch) error {
				if b.Text != nil {
					return fmt.Errorf("Scan kept texts")
				}
				return nil
			})
			if err != nil {
				t.Error(err)
			}
		})
	}
}
