package main

import (
	"io"
	"testing"
)

// benchTable is a run list's table of n rows, as runs list draws it.
func benchTable(n int) table {
	t := table{Header: []string{"code", "status", "recipe", "furnace", "operator", "lot", "started", "ended"}}
	for i := range n {
		t.add("G26-"+itoa5(i), "done", "demo", "tube-2", "op3", "L017", "2026-03-02 09:00", "2026-03-02 11:00")
	}
	return t
}

func itoa5(i int) string {
	b := []byte("00000")
	for k := 4; k >= 0 && i > 0; k-- {
		b[k] = byte('0' + i%10)
		i /= 10
	}
	return string(b)
}

// BenchmarkWriteTable7k draws the table of runs list --where on the
// 100,000-run benchmark log (7,247 runs) on a terminal.
func BenchmarkWriteTable7k(b *testing.B) {
	t := benchTable(7247)
	w := &outWriter{Writer: io.Discard, tty: true}
	for b.Loop() {
		if err := writeTable(w, t); err != nil {
			b.Fatal(err)
		}
	}
}
