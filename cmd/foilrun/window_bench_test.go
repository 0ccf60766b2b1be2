package main

import (
	"io"
	"path/filepath"
	"strings"
	"testing"
)

// BenchmarkWindowCommand is `foilrun window` 100×100 on the low-pressure
// template with CSV output, in-process: loading the recipe and furnace,
// the map and the output. The target for the whole command
// (process start included) is under 0.1 s.
func BenchmarkWindowCommand(b *testing.B) {
	recipe := filepath.Join("..", "..", "templates", "recipe-lowpressure.yaml")
	args := []string{"window", recipe, "--vary", "temperature=1000C:1060C:100", "--vary", "CH4=1sccm:20sccm:100", "--output", "csv"}
	for b.Loop() {
		var errb strings.Builder
		if code := run(args, &streams{In: strings.NewReader(""), Out: io.Discard, Err: &errb}); code != 0 {
			b.Fatalf("window: exit %d: %s", code, errb.String())
		}
	}
}
