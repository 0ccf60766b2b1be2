package tabular

import (
	"bufio"
	"io"
	"strings"
)

// Boxed draws a table of plain cells the way the terminal tables of
// foilrun look (tablewriter's light style: rules of box-drawing
// characters, one space of padding, the header left-aligned, a column
// right-aligned where right says so), in one pass over the cells after
// the column widths are known, without the per-cell work a general table
// writer does. A cell is plain when it is printable ASCII (space to
// tilde) without spaces at either end, and every row has as many cells
// as the header, which has no empty cell; Boxed draws nothing and
// returns false for any other table, for the general writer to draw.
// A test holds its output byte for byte to tablewriter's.
func Boxed(w io.Writer, header []string, rows [][]string, right []bool) (bool, error) {
	width := make([]int, len(header))
	for j, c := range header {
		if c == "" || !plain(c) {
			return false, nil
		}
		width[j] = len(c)
	}
	for _, row := range rows {
		if len(row) != len(header) {
			return false, nil
		}
		for j, c := range row {
			if !plain(c) {
				return false, nil
			}
			width[j] = max(width[j], len(c))
		}
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	rule(bw, width, "┌", "┬", "┐")
	line(bw, width, header, nil)
	if len(rows) > 0 {
		rule(bw, width, "├", "┼", "┤")
	}
	for _, row := range rows {
		line(bw, width, row, right)
	}
	rule(bw, width, "└", "┴", "┘")
	return true, bw.Flush()
}

// plain reports whether the cell is printable ASCII without spaces at
// either end.
func plain(c string) bool {
	if c != "" && (c[0] == ' ' || c[len(c)-1] == ' ') {
		return false
	}
	for i := 0; i < len(c); i++ {
		if c[i] < ' ' || c[i] > '~' {
			return false
		}
	}
	return true
}

// rule writes a horizontal rule: left, a run of ─ as wide as each padded
// column, mid between columns, then end.
func rule(bw *bufio.Writer, width []int, left, mid, end string) {
	bw.WriteString(left)
	for j, n := range width {
		if j > 0 {
			bw.WriteString(mid)
		}
		bw.WriteString(strings.Repeat("─", n+2))
	}
	bw.WriteString(end + "\n")
}

// line writes one row of cells, each padded to its column's width on the
// right, or on the left where right says so.
func line(bw *bufio.Writer, width []int, cells []string, right []bool) {
	for j, c := range cells {
		bw.WriteString("│ ")
		pad := width[j] - len(c)
		if j < len(right) && right[j] {
			spaces(bw, pad)
			bw.WriteString(c)
		} else {
			bw.WriteString(c)
			spaces(bw, pad)
		}
		bw.WriteByte(' ')
	}
	bw.WriteString("│\n")
}

func spaces(bw *bufio.Writer, n int) {
	for range n {
		bw.WriteByte(' ')
	}
}
