//go:build !linux

package main

import "fmt"

// onTTY needs Linux's /dev/ptmx.
func onTTY(n int, argv []string) error {
	return fmt.Errorf("ontty: pseudo-terminals are opened the Linux way only")
}
