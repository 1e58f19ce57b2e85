package engine

import (
	"context"
	"fmt"
	"slices"

	"github.com/assay-project/assay/checks/baseline"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Baseline summarises the data at paths (files or globs; not standard
// input, whose bytes could not be hashed) into a baseline file. With a
// policy p, the data is read with the policy's reader settings and
// declared types, only its declared columns are summarised, and no paths
// means the data the policy names; with p nil every column is.
func Baseline(ctx context.Context, p *rules.Policy, paths []string, opts source.Options) (*baseline.File, error) {
	var columns []string
	if p != nil {
		opts = sourceOptions(p, opts)
		if len(paths) == 0 {
			paths = policyPaths(p)
		}
		for _, c := range p.Columns {
			columns = append(columns, c.Name)
		}
	}
	if len(paths) == 0 {
		return nil, fmt.Errorf("no data to summarise: give data files")
	}
	if slices.Contains(paths, "-") {
		return nil, fmt.Errorf("a baseline records the hash of its inputs and cannot read standard input: give files")
	}
	set, err := source.Open(paths, opts)
	if err != nil {
		return nil, err
	}
	defer set.Close()
	f, err := baseline.Build(ctx, set, columns, "assay "+Version)
	if err != nil {
		return nil, fmt.Errorf("baseline: %w", err)
	}
	return f, nil
}
