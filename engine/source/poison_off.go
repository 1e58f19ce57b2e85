//go:build !assay_poison

package source

// poisonFreed is false: a recycler reuses the buffers freed to it (see
// recycler; the build tag assay_poison turns it into a test of readers).
const poisonFreed = false
