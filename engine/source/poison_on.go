//go:build assay_poison

package source

// poisonFreed is true: a recycler overwrites every buffer freed to it
// with poisonByte and never reuses it, so that a test run with the tag
// assay_poison shows any reader of a batch's memory after its release.
const poisonFreed = true
