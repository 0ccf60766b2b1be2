//go:build !linux

package micrograph

import "unsafe"

// adviseHuge does nothing outside Linux.
func adviseHuge(unsafe.Pointer, int) {}
