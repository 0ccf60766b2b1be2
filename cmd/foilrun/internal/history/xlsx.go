package history

import (
	"archive/zip"
	"bufio"
	"bytes"
	"cmp"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"path"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// An XLSX workbook is a zip of XML parts (ECMA-376, Office Open XML):
// _rels/.rels names the workbook part, the workbook lists its sheets and
// its relationships name each sheet's part and the shared strings. This
// reader takes what a sheet of runs needs: the sheets' names, the date
// system and the cells' raw values (a number's digits as written, a date
// as its serial). Elements are matched by local name, so the Strict
// namespaces read as the Transitional ones.

const maxXLSXRows, maxXLSXCols = 1 << 20, 1 << 14 // XLSX's bounds: 1048576 rows, 16384 columns (XFD)

// The reader's limits, so that no file makes it hold unbounded memory:
// the bytes of the file and of any part inflated, the cells held (gaps
// in rows too), the shared strings and the nesting (a sheet's is 7 deep).
var (
	maxXLSXFile   int64 = 1 << 30
	maxXLSXPart   int64 = 256 << 20
	maxXLSXCells        = 1 << 24
	maxXLSXShared       = 1 << 24
	maxXLSXDepth        = 128
)

// hintError is an error that says what to do; the reader's others mean a
// damaged file, or no workbook at all.
type hintError struct{ msg, hint string }

func (e *hintError) Error() string { return e.msg }

// tooLarge is a workbook over one of the reader's limits.
func tooLarge(format string, args ...any) error {
	return &hintError{fmt.Sprintf(format, args...), "split the workbook, or save the sheet as CSV with a .csv name"}
}

// book is a workbook opened for reading its sheets.
type book struct {
	parts    map[string]*zip.File // by lower-case name; nil: two parts have the name
	sheets   []bookSheet          // in the workbook's order
	date1904 bool                 // serials count days from 1904-01-01
	shared   string               // the shared-string table's part
}

// bookSheet is a sheet: its name, r:id and part ("" when none has the id).
type bookSheet struct{ name, id, part string }

// openBook reads the package's structure: the workbook part, its sheets,
// date system and shared-string table. Errors mean no XLSX workbook.
func openBook(r io.Reader) (*book, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxXLSXFile+1))
	if err != nil {
		return nil, err
	} else if int64(len(data)) > maxXLSXFile {
		return nil, tooLarge("the file is over %d MiB", maxXLSXFile>>20)
	} else if bytes.HasPrefix(data, []byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1")) {
		return nil, errors.New("an OLE2 file, not a zip: a workbook with a password, or an old .xls; remove the password, or save it as .xlsx")
	}
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return nil, err
	}
	b := &book{parts: map[string]*zip.File{}}
	for _, f := range zr.File {
		name := strings.ToLower(strings.ReplaceAll(f.Name, `\`, "/"))
		if _, dup := b.parts[name]; dup {
			b.parts[name] = nil
		} else if !strings.HasSuffix(name, "/") {
			b.parts[name] = f
		}
	}
	rels, err := b.rels("_rels/.rels", "")
	if err != nil {
		return nil, err
	}
	wb := relTarget(rels, "/relationships/officeDocument", "xl/workbook.xml")
	if err := b.readWorkbook(wb); err != nil {
		return nil, err
	}
	dir, base := path.Split(wb)
	if rels, err = b.rels(dir+"_rels/"+base+".rels", strings.TrimSuffix(dir, "/")); err != nil {
		return nil, err
	}
	b.shared = relTarget(rels, "/relationships/sharedStrings", "xl/sharedStrings.xml")
	for i, s := range b.sheets {
		if j := slices.IndexFunc(rels, func(rl rel) bool { return rl.id == s.id }); j >= 0 {
			b.sheets[i].part = rels[j].target
		}
	}
	return b, nil
}

// sheet finds a sheet by name, case aside as spreadsheets compare sheet
// names: its index, or -1.
func (b *book) sheet(name string) (int, error) {
	named := func(s bookSheet) bool { return strings.EqualFold(s.name, name) }
	i := slices.IndexFunc(b.sheets, named)
	if j := slices.IndexFunc(b.sheets[i+1:], named); j >= 0 {
		return -1, fmt.Errorf("the workbook has two sheets named %q and %q; rename one", b.sheets[i].name, b.sheets[i+1+j].name)
	}
	return i, nil
}

// rows reads sheet i's cells: rows[r-1] is row r (nil when empty), up to
// its last cell with a value or a formula, "" in the gaps; no empty rows
// after the last.
func (b *book) rows(i int) ([][]string, error) {
	s := b.sheets[i]
	if s.part == "" {
		return nil, fmt.Errorf("the workbook's relationships name no part for the sheet (r:id %q): the file is damaged", s.id)
	}
	shared, err := b.sharedStrings()
	if err != nil {
		return nil, err
	}
	x, err := b.open(s.part, "the sheet's part "+s.part+" is missing from the zip: the file is damaged")
	if err != nil {
		return nil, err
	}
	defer x.rc.Close()
	sr := sheetReader{x: x, shared: shared}
	for root := ""; ; {
		t, err := x.next()
		if err == io.EOF && root == "chartsheet" {
			return nil, &hintError{"it is a chart sheet, with no cells", "give --sheet with the name of a sheet of cells"}
		} else if err == io.EOF {
			return nil, x.errorf("no <sheetData>, the table of cells")
		} else if err != nil {
			return nil, err
		}
		if se, ok := t.(xml.StartElement); ok {
			root = cmp.Or(root, se.Name.Local)
			switch se.Name.Local {
			case "sheetData":
				err := x.children("", sr.readRow)
				return sr.rows, err
			case "row":
				return nil, x.errorf("a <row> outside <sheetData>")
			}
		}
	}
}

// open starts reading a part's XML; a part not in the zip is the error
// missing, or when that is "", nil and no error.
func (b *book) open(name, missing string) (*xmlIn, error) {
	f, ok := b.parts[strings.ToLower(name)]
	switch {
	case !ok && missing != "":
		return nil, errors.New(missing)
	case !ok:
		return nil, nil
	case f == nil:
		return nil, fmt.Errorf("the zip holds two parts named %s: the file is damaged", name)
	case f.UncompressedSize64 > uint64(maxXLSXPart): // archive/zip fails a part that inflates past this size
		return nil, tooLarge("%s is %d MiB uncompressed, over the %d MiB this reader takes from a part", name, f.UncompressedSize64>>20, maxXLSXPart>>20)
	}
	rc, err := f.Open()
	if err != nil {
		return nil, fmt.Errorf("%s: the zip is damaged (%v)", name, err)
	}
	return &xmlIn{part: name, d: xml.NewDecoder(bufio.NewReaderSize(rc, 32<<10)), rc: rc}, nil
}

// rel is a relationship of a part: its id, type and target part.
type rel struct{ id, typ, target string }

// each calls f for each element in part name's root, which must be root.
func (b *book) each(name, missing, root string, f func(*xmlIn, xml.StartElement) error) error {
	x, err := b.open(name, missing)
	if x == nil {
		return err
	}
	defer x.rc.Close()
	return x.children(root, func(se xml.StartElement) error { return f(x, se) })
}

// rels reads a relationships part (none when it is missing); targets are
// resolved from folder dir, or from the package's root when they begin
// with a slash. External targets are left out.
func (b *book) rels(name, dir string) ([]rel, error) {
	var rels []rel
	err := b.each(name, "", "Relationships", func(x *xmlIn, se xml.StartElement) error {
		if target := strings.ReplaceAll(attr(se, "Target"), `\`, "/"); se.Name.Local == "Relationship" && attr(se, "TargetMode") != "External" {
			if !strings.HasPrefix(target, "/") {
				target = dir + "/" + target
			}
			rels = append(rels, rel{attr(se, "Id"), attr(se, "Type"), strings.TrimPrefix(path.Clean(target), "/")})
		}
		return x.skip()
	})
	return rels, err
}

// relTarget is the target of the first relationship of type …typ, or def.
func relTarget(rels []rel, typ, def string) string {
	if i := slices.IndexFunc(rels, func(rl rel) bool { return strings.HasSuffix(rl.typ, typ) }); i >= 0 {
		return rels[i].target
	}
	return def
}

// readWorkbook reads the workbook part: its sheets and date system.
func (b *book) readWorkbook(name string) error {
	missing := "no workbook part " + name + " in the zip: is it another kind of zip file?"
	return b.each(name, missing, "workbook", func(x *xmlIn, se xml.StartElement) error {
		switch se.Name.Local {
		case "workbookPr": // date1904: xsd:boolean, 1 or true (ParseBool's other forms let be)
			if v, ok := lastAttr(se, "date1904"); ok {
				d, err := strconv.ParseBool(cmp.Or(strings.TrimSpace(v), "0"))
				if err != nil {
					return x.errorf("<workbookPr date1904=%q>: want 1, 0, true or false", v)
				}
				b.date1904 = d
			}
		case "sheets":
			return x.children("", func(se xml.StartElement) error {
				if se.Name.Local == "sheet" {
					s := bookSheet{name: attr(se, "name")}
					for _, a := range se.Attr {
						if a.Name.Local == "id" && a.Name.Space != "" && a.Name.Space != "xmlns" {
							s.id = a.Value // r:id, of the relationships namespace
						}
					}
					b.sheets = append(b.sheets, s)
				}
				return x.skip()
			})
		}
		return x.skip()
	})
}

// sharedStrings reads the shared-string table: each <si>'s text.
func (b *book) sharedStrings() ([]string, error) {
	var shared []string
	err := b.each(b.shared, "", "sst", func(x *xmlIn, se xml.StartElement) error {
		if se.Name.Local != "si" {
			return x.skip()
		} else if len(shared) >= maxXLSXShared {
			return tooLarge("%s has over %d shared strings", x.part, maxXLSXShared)
		}
		s, err := x.richText()
		shared = append(shared, s)
		return err
	})
	return shared, err
}

// sheetReader reads the rows of a worksheet's <sheetData> (readRow each).
type sheetReader struct {
	x      *xmlIn
	shared []string
	rows   [][]string
	row    int      // the row read, or the last
	col    int      // the column of the row's last cell read
	cur    []string // the row's cells
	width  int      // the last row's, to size the next
	cells  int      // cells held, gaps included
}

func (s *sheetReader) readRow(se xml.StartElement) error {
	if se.Name.Local != "row" {
		return s.x.errorf("<%s> in <sheetData>, where only rows belong", se.Name.Local)
	}
	n := s.row + 1
	if v, ok := lastAttr(se, "r"); ok {
		r, err := strconv.Atoi(v)
		if err != nil || r < 1 {
			return s.x.errorf("row number %q is not a number from 1 on", v)
		} else if r <= s.row {
			return s.x.errorf("row %d comes after row %d: rows go top to bottom", r, s.row)
		}
		n = r
	}
	if n > maxXLSXRows {
		return s.x.errorf("row %d: XLSX sheets have %d rows", n, maxXLSXRows)
	}
	s.row, s.col, s.cur = n, 0, nil
	err := s.x.children("", func(se xml.StartElement) error {
		switch se.Name.Local {
		case "c":
			return s.readCell(se)
		case "extLst":
			return s.x.skip()
		}
		return s.x.errorf("<%s> in row %d, where only cells belong", se.Name.Local, n)
	})
	if err == nil && s.cur != nil {
		for len(s.rows) < n-1 {
			s.rows = append(s.rows, nil)
		}
		s.rows, s.width = append(s.rows, s.cur), len(s.cur)
	}
	return err
}

// readCell reads a cell of the row, kept when it has a value or a formula.
func (s *sheetReader) readCell(se xml.StartElement) error {
	n, col, ref, typ := s.row, s.col+1, "", ""
	for _, a := range se.Attr {
		switch a.Name.Local {
		case "r":
			c, r, ok := cellRef(a.Value)
			if !ok {
				return s.x.errorf("cell reference %q is not a column and a row such as C7", a.Value)
			} else if r != n {
				return s.x.errorf("cell %s is in row %d", a.Value, n)
			}
			col, ref = c, a.Value
		case "t":
			typ = a.Value
		case "s":
			if _, err := strconv.ParseInt(a.Value, 10, 64); err != nil {
				return s.x.errorf("cell style %q is not a number", a.Value)
			}
		}
	}
	if ref == "" { // a cell without r: "cell 3 of row 7"
		ref = fmt.Sprintf("%d of row %d", col, n)
	}
	if col <= s.col {
		return s.x.errorf("cell %s is left of the cell before it (column %d): cells go left to right", ref, s.col)
	} else if col > maxXLSXCols {
		return s.x.errorf("cell %s: XLSX sheets have %d columns", ref, maxXLSXCols)
	}
	s.col = col
	var v, inline string
	var hasV, hasIS, hasF bool
	err := s.x.children("", func(se xml.StartElement) (err error) {
		switch name := se.Name.Local; {
		case name == "v" && !hasV:
			v, err = s.x.text()
			hasV = true
		case name == "is" && !hasIS:
			inline, err = s.x.richText()
			hasIS = true
		case name == "v" || name == "is":
			return s.x.errorf("cell %s has two <%s>", ref, name)
		case name == "f" || name == "extLst":
			hasF = hasF || name == "f"
			return s.x.skip()
		default:
			return s.x.errorf("<%s> in cell %s, where a value, a formula or a string belong", name, ref)
		}
		return err
	})
	if err != nil {
		return err
	}
	val := v
	switch typ {
	case "", "n", "b", "e", "str", "d":
	case "inlineStr":
		if hasIS {
			val = inline
		}
	case "s":
		if v == "" {
			break
		} else if i, err := strconv.Atoi(strings.TrimSpace(v)); err != nil {
			return s.x.errorf("cell %s: shared string %q is not a number", ref, v)
		} else if i < 0 || i >= len(s.shared) {
			return s.x.errorf("cell %s: shared string %d is not in the table (%d strings)", ref, i, len(s.shared))
		} else {
			val = s.shared[i]
		}
	default:
		return s.x.errorf("cell %s: unknown cell type t=%q", ref, typ)
	}
	if val == "" && !hasF {
		return nil
	}
	if s.cells += col - len(s.cur); s.cells > maxXLSXCells {
		return tooLarge("%s: the sheet holds over %d cells (each row counted to its last filled cell)", s.x.part, maxXLSXCells)
	}
	if s.cur == nil {
		s.cur = make([]string, 0, max(s.width, col))
	}
	for len(s.cur) < col-1 {
		s.cur = append(s.cur, "")
	}
	s.cur = append(s.cur, val)
	return nil
}

// cellRef reads a cell reference such as C7 (letters of either case):
// column and row, within XLSX's bounds.
func cellRef(ref string) (col, row int, ok bool) {
	i := 0
	for ; i < len(ref) && i < 4; i++ {
		c := ref[i] | 0x20 // lower case
		if c < 'a' || c > 'z' {
			break
		}
		col = col*26 + int(c-'a'+1)
	}
	row, err := strconv.Atoi(ref[i:])
	return col, row, err == nil && i > 0 && col <= maxXLSXCols && row >= 1 && row <= maxXLSXRows
}

// xmlIn reads a part's XML as element starts, ends and text, checking
// that each end tag closes the element open and bounding the nesting.
type xmlIn struct {
	part string
	d    *xml.Decoder
	rc   io.Closer
	open []xml.Name // the elements open, innermost last
}

// errorf is an error at the reader's place in the part, part:line:column
// just past what it read last.
func (x *xmlIn) errorf(format string, args ...any) error {
	line, col := x.d.InputPos()
	return fmt.Errorf("%s:%d:%d: %s", x.part, line, col, fmt.Sprintf(format, args...))
}

// next returns the next element start or end or text (passing over
// comments, processing instructions and directives); io.EOF at the end.
func (x *xmlIn) next() (xml.Token, error) {
	for {
		t, err := x.d.RawToken()
		if err == io.EOF && len(x.open) > 0 {
			return nil, x.errorf("the XML ends inside <%s>: the file is cut short", x.open[len(x.open)-1].Local)
		} else if _, syntax := err.(*xml.SyntaxError); syntax {
			err = fmt.Errorf("%s: %v", x.part, err)
		} else if err != nil && err != io.EOF {
			err = fmt.Errorf("%s: the zip is damaged (%v)", x.part, err)
		}
		if err != nil {
			return nil, err
		}
		switch tt := t.(type) { // t is returned as it is: boxed again, it would cost an allocation
		case xml.StartElement:
			if len(x.open) >= maxXLSXDepth {
				return nil, x.errorf("elements nested over %d deep", maxXLSXDepth)
			}
			x.open = append(x.open, tt.Name)
			return t, nil
		case xml.EndElement:
			if n := len(x.open); n == 0 {
				return nil, x.errorf("end tag </%s> with no element open", tt.Name.Local)
			} else if x.open[n-1] != tt.Name {
				return nil, x.errorf("end tag </%s> does not match <%s>", tt.Name.Local, x.open[n-1].Local)
			}
			x.open = x.open[:len(x.open)-1]
			return t, nil
		case xml.CharData:
			return t, nil
		}
	}
}

// skip reads past the end of the element just started.
func (x *xmlIn) skip() error {
	for depth := len(x.open); len(x.open) >= depth; {
		if _, err := x.next(); err != nil {
			return err
		}
	}
	return nil
}

// text returns the text of the element just started, its own (not that
// of elements in it), and reads past its end, in linear time however cut.
func (x *xmlIn) text() (string, error) {
	var s strings.Builder
	for depth := len(x.open); ; {
		t, err := x.next()
		if err != nil {
			return "", err
		}
		switch t := t.(type) {
		case xml.CharData:
			if len(x.open) == depth {
				s.Write(t)
			}
		case xml.EndElement:
			if len(x.open) < depth {
				return s.String(), nil
			}
		}
	}
}

// children calls f for each element in the element just started, or
// (root not "") in the part's root, which must be named root; f reads
// past the child's end. A part with no element has no children.
func (x *xmlIn) children(root string, f func(xml.StartElement) error) error {
	depth := len(x.open)
	for root != "" {
		t, err := x.next()
		if err == io.EOF {
			return nil
		} else if err != nil {
			return err
		}
		if se, ok := t.(xml.StartElement); ok && se.Name.Local != root {
			return x.errorf("the root element is <%s>, not <%s>", se.Name.Local, root)
		} else if ok {
			root, depth = "", 1
		}
	}
	for {
		t, err := x.next()
		if err != nil {
			return err
		}
		switch t := t.(type) {
		case xml.StartElement:
			if err := f(t); err != nil {
				return err
			}
		case xml.EndElement:
			if len(x.open) < depth {
				return nil
			}
		}
	}
}

// richText reads a string item (<si>, <is>): its <t>, then the <t> of
// each run <r>, its phonetic runs <rPh> left out; of several <t> in one
// place the last counts. ST_Xstring escapes are decoded (see unescape).
func (x *xmlIn) richText() (string, error) {
	var t string
	var runs strings.Builder
	err := x.children("", func(se xml.StartElement) (err error) {
		switch se.Name.Local {
		case "t":
			t, err = x.text()
		case "r":
			var rt string
			err = x.children("", func(se xml.StartElement) (err error) {
				if se.Name.Local != "t" {
					return x.skip()
				}
				rt, err = x.text()
				return err
			})
			runs.WriteString(rt)
		default:
			err = x.skip()
		}
		return err
	})
	return unescape(t + runs.String()), err
}

// unescape decodes ST_Xstring's escapes (ECMA-376 Part 1): _xHHHH_ is
// the UTF-16 code unit HHHH, _x005F_ thus an underscore (to write "_x").
// A surrogate half is dropped, as the reader foilrun used before drops it.
func unescape(s string) string {
	if !strings.Contains(s, "_x") {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		if i+7 <= len(s) && s[i] == '_' && s[i+1] == 'x' && s[i+6] == '_' {
			if u, err := strconv.ParseUint(s[i+2:i+6], 16, 16); err == nil {
				if r := rune(u); utf8.ValidRune(r) {
					b.WriteRune(r)
				}
				i += 7
				continue
			}
		}
		b.WriteByte(s[i])
		i++
	}
	return b.String()
}

// attr is the value of an element's attribute by local name, "" when
// missing; lastAttr says whether it is there. Of two, the last counts.
func attr(se xml.StartElement, local string) string { v, _ := lastAttr(se, local); return v }

func lastAttr(se xml.StartElement, local string) (v string, ok bool) {
	for _, a := range se.Attr {
		if a.Name.Local == local {
			v, ok = a.Value, true
		}
	}
	return v, ok
}
