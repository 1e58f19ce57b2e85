package engine

// ForceSpill returns opts with the first pass copying the columns of the
// second whatever the formats (on), or never (off).
func ForceSpill(opts Options, on bool) Options {
	opts.spill = spillNever
	if on {
		opts.spill = spillAlways
	}
	return opts
}
