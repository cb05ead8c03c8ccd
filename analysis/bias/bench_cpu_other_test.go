//go:build !unix

package bias

// processCPU is not measured here (cpu-ns/meta reads 0).
func processCPU() int64 { return 0 }
