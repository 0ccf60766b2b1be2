//go:build !linux

package hugemem

import "unsafe"

// adviseHuge does nothing outside Linux.
func adviseHuge(unsafe.Pointer, int) {}
