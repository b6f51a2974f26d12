//go:build !linux

package forecast

// threadCPU is not measured outside Linux.
func threadCPU() int64 { return 0 }
