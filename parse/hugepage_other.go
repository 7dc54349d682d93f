//go:build !linux

package parse

// adviseHuge is a no-op where Linux transparent huge pages do not exist.
func adviseHuge[T int64 | float64](s []T) {}
