package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestOutputFormatFlag(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in      string
		want    outputFormat
		wantErr string
	}{
		{"table", formatTable, ""},
		{"csv", formatCSV, ""},
		{"json", formatJSON, ""},
		{"JSON", formatTable, `--output "JSON": want table, csv or json`},
		{"xml", formatTable, `--output "xml": want table, csv or json`},
		{"", formatTable, `--output "": want table, csv or json`},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			o := outputFormat(formatTable)
			err := o.Set(tt.in)
			got := ""
			if err != nil {
				got = err.Error()
			}
			if got != tt.wantErr || o != tt.want {
				t.Errorf("Set(%q): got %q, error %q; want %q, error %q", tt.in, o, got, tt.want, tt.wantErr)
			}
		})
	}
}

// One table, both forms: aligned with light rules (numbers to the right)
// on a terminal,
// tab-separated with the header row when piped (cells' tabs and line
// breaks become spaces so each row stays one line).
func TestWriteTableForms(t *testing.T) {
	t.Parallel()
	tb := table{Header: []string{"step", "T C"}, Numeric: []bool{false, true}}
	tb.add("1 anneal", "1000")
	tb.add("2 grow\n→ check the flow", "980")
	tests := []struct {
		name string
		tty  bool
		want string
	}{
		{"terminal", true, "" +
			"┌──────────────────┬──────┐\n" +
			"│ step             │ T C  │\n" +
			"├──────────────────┼──────┤\n" +
			"│ 1 anneal         │ 1000 │\n" +
			"│ 2 grow           │  980 │\n" +
			"│ → check the flow │      │\n" +
			"└──────────────────┴──────┘\n"},
		{"piped", false, "step\tT C\n1 anneal\t1000\n2 grow → check the flow\t980\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := writeTable(&outWriter{Writer: &b, tty: tt.tty}, tb); err != nil {
				t.Fatal(err)
			}
			if b.String() != tt.want {
				t.Errorf("got\n%s\nwant\n%s", b.String(), tt.want)
			}
		})
	}
}

// The piped form of a whole command's human output, pinned: check on the
// low-pressure template with stdout not a terminal.
func TestCheckPipedGolden(t *testing.T) {
	t.Parallel()
	code, out, errs := runPiped(t, "check", tmplDir+"recipe-lowpressure.yaml")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if strings.Contains(out, "│") {
		t.Errorf("piped output holds box-drawing rules:\n%s", out)
	}
	golden(t, "check/lowpressure-piped.tsv", out)
}

func TestProgressOnlyOnATerminal(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	if p := (&streams{Err: &b}).progress("copying"); p != nil || p.report() != nil {
		t.Fatalf("got a progress bar with stderr piped")
	}
	var nothing *progress
	nothing.update(1, 2) // a nil bar does nothing
	nothing.finish()
	p := (&streams{Err: &b, ErrTTY: true}).progress("copying")
	report := p.report()
	if report == nil {
		t.Fatal("got no progress callback with stderr a terminal")
	}
	report(1, 4)
	report(4, 4)
	p.finish()
	if !strings.Contains(b.String(), "copying") {
		t.Errorf("got %q on stderr, want a bar described as copying", b.String())
	}
}

// FuzzOutputFormat: Set never panics, accepts exactly the three formats,
// and what it accepts reads back unchanged through String.
func FuzzOutputFormat(f *testing.F) {
	for _, s := range []string{"table", "csv", "json", "", "Table", "json ", "xml"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		o := outputFormat(formatTable)
		err := o.Set(s)
		ok := s == formatTable || s == formatCSV || s == formatJSON
		if (err == nil) != ok {
			t.Fatalf("Set(%q): got error %v, want accepted %v", s, err, ok)
		}
		if ok && o.String() != s {
			t.Fatalf("Set(%q) then String: got %q", s, o.String())
		}
		if !ok && o.String() != formatTable {
			t.Fatalf("Set(%q) refused but changed the value to %q", s, o.String())
		}
	})
}
