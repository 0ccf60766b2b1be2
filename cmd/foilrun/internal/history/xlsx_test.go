package history

import (
	"archive/zip"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

// The reference throughout is excelize v2, the reader foilrun used before
// its own: GetRows with RawCellValue for cells, GetSheetList for sheets,
// ExcelDateToTime for date serials.

// excelizeRows reads a sheet of the workbook in data ("" the first) as
// foilrun did before. reference: excelize v2 GetRows with RawCellValue.
func excelizeRows(data []byte, sheet string) ([][]string, []string, error) {
	f, err := excelize.OpenReader(bytes.NewReader(data), excelize.Options{RawCellValue: true})
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	list := f.GetSheetList()
	if sheet == "" && len(list) > 0 {
		sheet = list[0]
	}
	rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
	return rows, list, err
}

// excelizeClean is excelizeRows of the first sheet when excelize reads the
// workbook without a problem: GetRows stops silently at a row it cannot
// read, so the rows' iterator must report none, and the whole-sheet
// decoding of GetCellValue none either (the rows' reader drops a cell
// whose attributes it cannot decode). A panic of excelize counts as a
// problem. reference: excelize v2 GetRows with RawCellValue.
func excelizeClean(data []byte) (rows [][]string, list []string, ok bool) {
	defer func() {
		if recover() != nil {
			ok = false
		}
	}()
	f, err := excelize.OpenReader(bytes.NewReader(data), excelize.Options{RawCellValue: true})
	if err != nil {
		return nil, nil, false
	}
	defer f.Close()
	list = f.GetSheetList()
	if len(list) == 0 {
		return nil, nil, false
	}
	if rows, err = f.GetRows(list[0], excelize.Options{RawCellValue: true}); err != nil {
		return nil, nil, false
	}
	it, err := f.Rows(list[0])
	if err != nil {
		return nil, nil, false
	}
	for it.Next() {
		if _, err := it.Columns(excelize.Options{RawCellValue: true}); err != nil {
			return nil, nil, false
		}
	}
	if it.Close() != nil {
		return nil, nil, false
	}
	if _, err := f.GetCellValue(list[0], "A1", excelize.Options{RawCellValue: true}); err != nil {
		return nil, nil, false
	}
	return rows, list, true
}

// ourRows reads a sheet ("" the first) with the reader under test.
func ourRows(data []byte, sheet string) ([][]string, *book, error) {
	b, err := openBook(bytes.NewReader(data))
	if err != nil {
		return nil, nil, err
	}
	if sheet == "" && len(b.sheets) > 0 {
		sheet = b.sheets[0].name
	}
	i, err := b.sheet(sheet)
	if err == nil && i < 0 {
		err = fmt.Errorf("no sheet %q", sheet)
	}
	if err != nil {
		return nil, b, err
	}
	rows, err := b.rows(i)
	return rows, b, err
}

func sheetNames(b *book) []string {
	var names []string
	for _, s := range b.sheets {
		names = append(names, s.name)
	}
	return names
}

// diffRows is "" when the rows are the same strings in the same places
// (an empty row nil or not), else the first difference.
func diffRows(got, want [][]string) string {
	for i := range max(len(got), len(want)) {
		var g, w []string
		if i < len(got) {
			g = got[i]
		}
		if i < len(want) {
			w = want[i]
		}
		if i >= len(got) || i >= len(want) || !slices.Equal(g, w) {
			return fmt.Sprintf("%d rows, want %d; row %d: got %q, want %q", len(got), len(want), i+1, g, w)
		}
	}
	return ""
}

// put writes values from cell A of row r of sheet on.
func put(t testing.TB, f *excelize.File, sheet string, r int, values ...any) {
	t.Helper()
	cell, _ := excelize.CoordinatesToCellName(1, r)
	if err := f.SetSheetRow(sheet, cell, &values); err != nil {
		t.Fatal(err)
	}
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// written is the bytes of a workbook that write fills.
func written(t testing.TB, write func(f *excelize.File)) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	write(f)
	buf, err := f.WriteToBuffer()
	must(t, err)
	return buf.Bytes()
}

// Workbooks written by excelize read as excelize reads them, cell for
// cell, for the sheet asked for (the first by default).
func TestReadXLSXLikeExcelize(t *testing.T) {
	t.Parallel()
	day := time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)
	tests := []struct {
		name, sheet string
		write       func(t *testing.T, f *excelize.File)
	}{
		{"numbers", "", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, 0, 1, -1, 2.5, -2.5, 0.1, 1e-7, -1e300, math.MaxFloat64, math.SmallestNonzeroFloat64, 1.0/3)
			put(t, f, "Sheet1", 2, int64(math.MaxInt64), uint64(math.MaxUint64), 12345678901234567890.0, 9007199254740993, int8(-8), float32(0.1))
			must(t, f.SetCellFloat("Sheet1", "A3", 1000.4567, 2, 64))
			must(t, f.SetCellInt("Sheet1", "B3", -42))
		}},
		{"strings", "", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, "  padded  ", "007", "0.50", "1,5", " ", "Ø 25 µm foil, 温度", "🧪 run", "two\nlines", "tab\there", `<&>"'`, "_x000D_ as typed", "a_b", strings.Repeat("long ", 2000))
			put(t, f, "Sheet1", 2, "007", "007", "  padded  ") // shared, written once
			must(t, f.SetCellStr("Sheet1", "A3", "1e5"))
		}},
		{"rich text", "", func(t *testing.T, f *excelize.File) {
			must(t, f.SetCellRichText("Sheet1", "B2", []excelize.RichTextRun{{Text: "Cu ", Font: &excelize.Font{Bold: true}}, {Text: "foil", Font: &excelize.Font{VertAlign: "superscript"}}, {Text: " 25 µm"}}))
		}},
		{"booleans and formulas", "", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, true, false, 2)
			must(t, f.SetCellFormula("Sheet1", "D1", "C1*2"))
			must(t, f.SetCellFormula("Sheet1", "F3", "SUM(A1:C1)")) // a row with a formula only, no cached value
			must(t, f.SetCellFormula("Sheet1", "A5", "C1+1", excelize.FormulaOpts{Type: &[]string{excelize.STCellFormulaTypeShared}[0], Ref: &[]string{"A5:A7"}[0]}))
		}},
		{"dates", "", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, day, day.Add(90*time.Second), time.Date(1900, 1, 15, 0, 0, 0, 0, time.UTC), time.Date(1900, 3, 1, 12, 0, 0, 0, time.UTC), 90*time.Minute)
			must(t, f.SetCellValue("Sheet1", "A2", day.Format(time.RFC3339)))
		}},
		{"dates of 1904", "", func(t *testing.T, f *excelize.File) {
			yes := true
			must(t, f.SetWorkbookProps(&excelize.WorkbookPropsOptions{Date1904: &yes}))
			put(t, f, "Sheet1", 1, day, time.Date(1904, 1, 2, 6, 0, 0, 0, time.UTC))
		}},
		{"empty rows and gaps", "", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, "Run", "T")
			put(t, f, "Sheet1", 2, "A-1", 1000)
			must(t, f.SetCellValue("Sheet1", "D5", "far"))
			must(t, f.SetCellValue("Sheet1", "Z5", 26))
			must(t, f.SetCellValue("Sheet1", "B9", "after three empty rows"))
			must(t, f.SetCellValue("Sheet1", "C9", nil))
			style, err := f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Color: []string{"FFFF00"}, Pattern: 1}})
			must(t, err)
			must(t, f.SetCellStyle("Sheet1", "C10", "H12", style)) // styled but empty: no cells, no rows
			must(t, f.SetCellStyle("Sheet1", "C9", "F9", style))
			must(t, f.SetRowHeight("Sheet1", 30, 40))
		}},
		{"far corners", "", func(t *testing.T, f *excelize.File) {
			must(t, f.SetCellValue("Sheet1", "A1", "first"))
			must(t, f.SetCellValue("Sheet1", "XFD1", "last column"))
			must(t, f.SetCellValue("Sheet1", "C300", "row 300")) // (excelize takes a minute to write row 1048576: hand-written below)
		}},
		{"the second of three sheets", "Runs 2024", func(t *testing.T, f *excelize.File) {
			put(t, f, "Sheet1", 1, "not this one")
			_, err := f.NewSheet("Runs 2024")
			must(t, err)
			_, err = f.NewSheet("Notes")
			must(t, err)
			put(t, f, "Runs 2024", 1, "Run", "T (C)")
			put(t, f, "Runs 2024", 3, "B-7", 1035.5)
			put(t, f, "Notes", 1, "nor this")
		}},
		{"a sheet named in other case", "runs", func(t *testing.T, f *excelize.File) {
			must(t, f.SetSheetName("Sheet1", "Cover"))
			_, err := f.NewSheet("RUNS")
			must(t, err)
			put(t, f, "RUNS", 2, "x", 1)
		}},
		{"stream writer", "", func(t *testing.T, f *excelize.File) {
			sw, err := f.NewStreamWriter("Sheet1")
			must(t, err)
			must(t, sw.SetRow("A1", []any{"Run", "Date", "T", "ok"}))
			must(t, sw.SetRow("A2", []any{"S-1", day, 1000.5, true}))
			must(t, sw.SetRow("B4", []any{excelize.Cell{Formula: "C2*2"}, excelize.Cell{Value: "  x  "}}))
			must(t, sw.Flush())
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			data := written(t, func(f *excelize.File) { tt.write(t, f) })
			want, list, err := excelizeRows(data, tt.sheet) // reference: excelize v2 GetRows with RawCellValue
			if err != nil {
				t.Fatal(err)
			}
			got, b, err := ourRows(data, tt.sheet)
			if err != nil {
				t.Fatal(err)
			}
			if d := diffRows(got, want); d != "" {
				t.Error(d)
			}
			if !slices.Equal(sheetNames(b), list) { // reference: excelize v2 GetSheetList
				t.Errorf("sheets %q, want %q", sheetNames(b), list)
			}
			if len(want) == 0 {
				t.Error("the case reads no rows: it tests nothing")
			}
		})
	}
}

// part is a file of a hand-written zip.
type part struct{ name, body string }

func zipOf(t testing.TB, parts ...part) []byte {
	var buf bytes.Buffer
	w := zip.NewWriter(&buf)
	for _, p := range parts {
		fw, err := w.Create(p.name)
		must(t, err)
		_, err = io.WriteString(fw, p.body)
		must(t, err)
	}
	must(t, w.Close())
	return buf.Bytes()
}

const (
	nsMain = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
	nsRels = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
	nsPkg  = "http://schemas.openxmlformats.org/package/2006/relationships"
	// The package's relationships of a workbook at xl/workbook.xml.
	rootRels = `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="` + nsPkg + `"><Relationship Id="rId1" Type="` + nsRels + `/officeDocument" Target="xl/workbook.xml"/></Relationships>`
	// The workbook's: sheet1 and the shared strings.
	bookRels = `<Relationships xmlns="` + nsPkg + `"><Relationship Id="rId1" Type="` + nsRels + `/worksheet" Target="worksheets/sheet1.xml"/>` +
		`<Relationship Id="rId9" Type="` + nsRels + `/sharedStrings" Target="sharedStrings.xml"/></Relationships>`
	oneSheet = `<workbook xmlns="` + nsMain + `" xmlns:r="` + nsRels + `"><sheets><sheet name="S" sheetId="1" r:id="rId1"/></sheets></workbook>`
)

// handBook is a workbook of one sheet "S" whose <sheetData> holds rows,
// with shared strings sis (no table when "") and a workbook part wb (the
// one-sheet one when "").
func handBook(t testing.TB, rows, sis, wb string) []byte {
	return zipOf(t, handParts(rows, sis, wb)...)
}

func handParts(rows, sis, wb string) []part {
	if wb == "" {
		wb = oneSheet
	}
	parts := []part{{"_rels/.rels", rootRels}, {"xl/workbook.xml", wb}, {"xl/_rels/workbook.xml.rels", bookRels},
		{"xl/worksheets/sheet1.xml", `<worksheet xmlns="` + nsMain + `"><sheetData>` + rows + `</sheetData></worksheet>`}}
	if sis != "" {
		parts = append(parts, part{"xl/sharedStrings.xml", `<sst xmlns="` + nsMain + `">` + sis + `</sst>`})
	}
	return parts
}

// Hand-written workbooks for what excelize does not write: each read
// gives the rows worked out by hand, and excelize reads the same where it
// reads such a workbook (sameAsExcelize).
func TestReadXLSXHandWritten(t *testing.T) {
	t.Parallel()
	strict := func(s string) string {
		return strings.NewReplacer(nsMain, "http://purl.oclc.org/ooxml/spreadsheetml/main",
			nsRels, "http://purl.oclc.org/ooxml/officeDocument/relationships").Replace(s)
	}
	corners := make([][]string, 1<<20)
	corners[0] = make([]string, 1<<14)
	corners[0][0], corners[0][1<<14-1], corners[1<<20-1] = "1", "2", []string{"", "3"}
	tests := []struct {
		name           string
		data           []byte
		want           [][]string
		sameAsExcelize bool
	}{
		{"far corners", handBook(t, `<row r="1"><c r="A1"><v>1</v></c><c r="XFD1"><v>2</v></c></row><row r="1048576"><c r="B1048576"><v>3</v></c></row>`, "", ""),
			corners, true},
		{"inline strings", handBook(t, `<row r="1"><c r="A1" t="inlineStr"><is><t>plain</t></is></c>`+
			`<c r="B1" t="inlineStr"><is><r><t>rich </t></r><r><rPr><b/><sz val="11"/></rPr><t>text</t></r></is></c>`+
			`<c r="C1" t="inlineStr"><is><t xml:space="preserve"> sp </t></is></c>`+
			`<c r="D1" t="inlineStr"><is><t>a_x000D_b_x005F_x0041_ _x00e9_</t></is></c>`+
			`<c r="E1" t="inlineStr"><v>no is</v></c><c r="F1" t="inlineStr"><is/></c></row>`, "", ""),
			[][]string{{"plain", "rich text", " sp ", "a\rb_x0041_ é", "no is"}}, true},
		{"shared strings: runs, phonetic runs left out, escapes", handBook(t,
			`<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v> 1 </v></c><c r="C1" t="s"><v>2</v></c><c r="D1" t="s"><v>3</v></c><c r="E1" t="s"><v>4</v></c></row>`,
			`<si><t>銅箔</t><rPh sb="0" eb="2"><t>どうはく</t></rPh><phoneticPr fontId="1"/></si>`+
				`<si><r><t>Cu </t></r><r><rPr><vertAlign val="superscript"/></rPr><t>foil</t></r><rPh sb="0" eb="1"><t>PH</t></rPh></si>`+
				`<si><t xml:space="preserve">   </t></si><si><t>x_xD83D__xDE00_y_x0000_</t></si><si><t>first</t><t>last</t><r><t>a</t><t>b</t></r></si>`, ""),
			[][]string{{"銅箔", "Cu foil", "   ", "xy\x00", "lastb"}}, true},
		{"cells and rows without r", handBook(t, `<row><c><v>1</v></c><c><v>2</v></c><c r="E1"><v>5</v></c><c><v>6</v></c></row>`+
			`<row r="4"><c r="b4"><v>d</v></c></row><row><c r="A05"><v>e</v></c></row>`, "", ""),
			[][]string{{"1", "2", "", "", "5", "6"}, nil, nil, {"", "d"}, {"e"}}, true},
		{"formulas with cached values, types", handBook(t, `<row r="2"><c r="A2"><f>1+1</f><v>2</v></c><c r="B2" t="str"><f>"x"&amp;"y"</f><v>xy</v></c>`+
			`<c r="C2" t="b"><f>TRUE()</f><v>1</v></c><c r="D2" t="e"><f>1/0</f><v>#DIV/0!</v></c><c r="E2" t="d"><v>2025-03-04T09:30:00Z</v></c>`+
			`<c r="F2" t="n"><v>-1.5E-3</v></c><c r="H2"><f>A2</f><v></v></c></row><row r="3"><c r="B3" s="3"/><c r="C3"><v></v></c></row>`+
			`<row r="4"><c r="C4" t="str"><f>""</f></c></row><row r="5"><c r="A5"><v/></c></row>`, "", ""),
			[][]string{nil, {"2", "xy", "1", "#DIV/0!", "2025-03-04T09:30:00Z", "-1.5E-3", "", ""}, nil, {"", "", ""}}, true},
		{"XML forms", zipOf(t, append(handParts("", "", "")[:3], part{"xl/worksheets/sheet1.xml", "\ufeff<?xml version=\"1.0\"?>\n<!-- sheet -->" +
			`<worksheet xmlns="` + nsMain + `"><dimension ref="A1:D1"/><cols><col min="1" max="2" width="9"/></cols><sheetData>` +
			`<row r="1"><c r="A1"><v><![CDATA[12]]></v></c><c r="B1"><v>3<!-- c -->4</v></c><c r="C1" t="s"><v>0</v></c><c r="D1"><v>5</v><extLst><ext uri="x"/></extLst></c><extLst/></row>` +
			`</sheetData><mergeCells count="1"><mergeCell ref="E1:F1"/></mergeCells><unclosed></worksheet>`},
			part{"xl/sharedStrings.xml", `<x:sst xmlns:x="` + nsMain + `"><x:si><x:t>&amp;&lt;&#x41;&#66;</x:t></x:si></x:sst>`})...),
			[][]string{{"12", "34", "&<AB", "5"}}, true},
		{"Strict namespaces", zipOf(t,
			part{"_rels/.rels", strict(strings.ReplaceAll(rootRels, nsRels+"/officeDocument", "http://purl.oclc.org/ooxml/officeDocument/relationships/officeDocument"))},
			part{"xl/workbook.xml", strict(`<workbook xmlns="` + nsMain + `" xmlns:r="` + nsRels + `" conformance="strict"><workbookPr date1904="1"/><sheets><sheet name="S" sheetId="1" r:id="rId1"/></sheets></workbook>`)},
			part{"xl/_rels/workbook.xml.rels", strict(bookRels)},
			part{"xl/worksheets/sheet1.xml", strict(`<worksheet xmlns="` + nsMain + `"><sheetData><row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1"><v>44258.5</v></c></row></sheetData></worksheet>`)},
			part{"xl/sharedStrings.xml", strict(`<sst xmlns="` + nsMain + `"><si><t>strict</t></si></sst>`)}),
			[][]string{{"strict", "44258.5"}}, true},
		{"absolute targets, a workbook elsewhere", zipOf(t,
			part{"_rels/.rels", strings.Replace(rootRels, `Target="xl/workbook.xml"`, `Target="/book/main.xml"`, 1)},
			part{"book/main.xml", oneSheet},
			part{"book/_rels/main.xml.rels", `<Relationships xmlns="` + nsPkg + `"><Relationship Id="rId1" Type="` + nsRels + `/worksheet" Target="/sheets/../Sheets/one.xml"/></Relationships>`},
			part{"sheets/one.xml", `<worksheet xmlns="` + nsMain + `"><sheetData><row r="1"><c r="A1"><v>1</v></c></row></sheetData></worksheet>`}),
			[][]string{{"1"}}, false}, // excelize: no sheet "S" (it finds parts by exact name only)
		{"relative targets up a folder", zipOf(t,
			part{"_rels/.rels", strings.Replace(rootRels, `Target="xl/workbook.xml"`, `Target="book/main.xml"`, 1)},
			part{"book/main.xml", oneSheet},
			part{"book/_rels/main.xml.rels", `<Relationships xmlns="` + nsPkg + `"><Relationship Id="rId1" Type="` + nsRels + `/worksheet" Target="../sheets/one.xml"/></Relationships>`},
			part{"sheets/one.xml", `<worksheet xmlns="` + nsMain + `"><sheetData><row r="1"><c r="A1"><v>1</v></c></row></sheetData></worksheet>`}),
			[][]string{{"1"}}, true},
		{"shared strings named by the relationships", zipOf(t, part{"_rels/.rels", rootRels}, part{"xl/workbook.xml", oneSheet},
			part{"xl/_rels/workbook.xml.rels", strings.Replace(bookRels, `Target="sharedStrings.xml"`, `Target="text/strings.xml"`, 1)},
			part{"xl/worksheets/sheet1.xml", `<worksheet xmlns="` + nsMain + `"><sheetData><row r="1"><c r="A1" t="s"><v>0</v></c></row></sheetData></worksheet>`},
			part{"xl/text/strings.xml", `<sst xmlns="` + nsMain + `"><si><t>found</t></si></sst>`}),
			[][]string{{"found"}}, false}, // excelize looks at xl/sharedStrings.xml only
		{"no package relationships", zipOf(t, handParts(`<row r="1"><c r="A1"><v>7</v></c></row>`, "", "")[1:]...),
			[][]string{{"7"}}, false}, // excelize finds no workbook then
		{"part names in other case, backslashes", zipOf(t, part{"_rels/.rels", rootRels}, part{"XL/Workbook.xml", oneSheet},
			part{`xl\_rels\workbook.xml.rels`, bookRels},
			part{"xl/worksheets/Sheet1.XML", `<worksheet xmlns="` + nsMain + `"><sheetData><row r="1"><c r="A1"><v>8</v></c></row></sheetData></worksheet>`}),
			[][]string{{"8"}}, false}, // excelize matches part names exactly
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			got, _, err := ourRows(tt.data, "")
			if err != nil {
				t.Fatal(err)
			}
			if d := diffRows(got, tt.want); d != "" {
				t.Error(d)
			}
			if !tt.sameAsExcelize {
				return
			}
			ref, _, err := excelizeRows(tt.data, "") // reference: excelize v2 GetRows with RawCellValue
			if err != nil {
				t.Fatal(err)
			}
			if d := diffRows(got, ref); d != "" {
				t.Errorf("against excelize: %s", d)
			}
		})
	}
}

// The date system: workbookPr date1904 ("1" or "true"), read into the
// sheet and used for its serials; 1900 otherwise. The serial 44258.395833
// is 2025-03-04 09:30 counted from 1904-01-01 (1462 days after
// 1899-12-30), as a spreadsheet saving 1904 dates writes it.
func TestReadXLSX1904(t *testing.T) {
	t.Parallel()
	row := `<row r="1"><c r="A1" t="inlineStr"><is><t>Date</t></is></c></row><row r="2"><c r="A2"><v>44258.395833333336</v></c></row>`
	book := func(pr string) string {
		return strings.Replace(oneSheet, "<sheets>", pr+"<sheets>", 1)
	}
	for _, c := range []struct {
		pr   string
		d    bool
		want time.Time
	}{
		{`<workbookPr date1904="1"/>`, true, time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)},
		{`<workbookPr date1904="true" defaultThemeVersion="1"/>`, true, time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)},
		{`<workbookPr date1904="0"/>`, false, time.Date(2021, 3, 3, 9, 30, 0, 0, time.UTC)},
		{`<workbookPr/>`, false, time.Date(2021, 3, 3, 9, 30, 0, 0, time.UTC)},
		{``, false, time.Date(2021, 3, 3, 9, 30, 0, 0, time.UTC)},
	} {
		s, err := ReadSheet("b.xlsx", bytes.NewReader(handBook(t, row, "", book(c.pr))), "")
		if err != nil {
			t.Fatal(err)
		}
		if s.Date1904 != c.d {
			t.Errorf("%s: Date1904 %v, want %v", c.pr, s.Date1904, c.d)
		}
		got, err := sheetDate(s.Rows[0].Cells[0], "", s.XLSX, s.Date1904)
		if err != nil || !got.Equal(c.want) {
			t.Errorf("%s: %v, %v; want %v", c.pr, got, err, c.want)
		}
	}
	// A workbook excelize saves with 1904 dates: its dates read back.
	day := time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)
	data := written(t, func(f *excelize.File) {
		yes := true
		must(t, f.SetWorkbookProps(&excelize.WorkbookPropsOptions{Date1904: &yes}))
		put(t, f, "Sheet1", 1, "Date")
		put(t, f, "Sheet1", 2, day)
	})
	s, err := ReadSheet("b.xlsx", bytes.NewReader(data), "")
	if err != nil {
		t.Fatal(err)
	}
	if got, err := sheetDate(s.Rows[0].Cells[0], "", true, s.Date1904); !s.Date1904 || err != nil || !got.Equal(day) {
		t.Errorf("excelize's 1904 workbook: Date1904 %v, %v, %v; want %v", s.Date1904, got, err, day)
	}
	// Through Convert, the run starts on that day (not four years and a
	// day earlier, as the 1900 system reads the serial).
	data = written(t, func(f *excelize.File) {
		yes := true
		must(t, f.SetWorkbookProps(&excelize.WorkbookPropsOptions{Date1904: &yes}))
		put(t, f, "Sheet1", 1, "Date", "T (C)")
		put(t, f, "Sheet1", 2, day, 1040)
	})
	in := convertInput(t, "Date,T (C)\n2025-01-01,1000\n", "started: Date\nsteps:\n  grow:\n    temperature: {column: \"T (C)\", unit: C}\n")
	if in.Sheet, err = ReadSheet("c.xlsx", bytes.NewReader(data), ""); err != nil {
		t.Fatal(err)
	}
	res, err := Convert(in)
	if err != nil {
		t.Fatal(err)
	}
	if got := res.Runs[0].Record.Started; !got.Equal(day) {
		t.Errorf("1904 workbook through Convert: started %v, want %v", got, day)
	}
}

// Workbooks that genSheet makes of random programs (as FuzzReadXLSX
// does) read as excelize reads them. reference: excelize v2 GetRows with
// RawCellValue. 500 programs take about a third of a second (2,000 took
// 1.5 s of the suite); `go test -fuzz FuzzReadXLSX` goes further.
func TestReadXLSXGenerated(t *testing.T) {
	t.Parallel()
	const programs = 500
	rng := rand.New(rand.NewPCG(7, 8))
	compared := 0
	for range programs {
		prog := make([]byte, rng.IntN(80))
		for i := range prog {
			prog[i] = byte(rng.Uint32())
		}
		sheet, shared := genSheet(prog)
		in := oneSheetBook(t, sheet, shared)
		got, _, err := ourRows(in, "")
		if err != nil {
			t.Fatalf("program %q: %v", prog, err)
		}
		if want, _, ok := excelizeClean(in); ok {
			if d := diffRows(got, want); d != "" {
				t.Fatalf("program %q: %s", prog, d)
			}
			compared++
		}
	}
	if compared < programs*95/100 {
		t.Errorf("excelize read only %d of %d generated workbooks", compared, programs)
	}
}

// Bad workbooks: each a clear error, matching ErrInvalid, with a hint.
func TestReadXLSXBad(t *testing.T) {
	row := func(cells string) []byte {
		return handBook(t, `<row r="1">`+cells+`</row>`, `<si><t>a</t></si><si><t>b</t></si>`, "")
	}
	sheet := func(xml string) []byte {
		return zipOf(t, append(handParts("", "", "")[:3], part{"xl/worksheets/sheet1.xml", xml})...)
	}
	damaged, split := "save it again as .xlsx", "split the workbook"
	var big bytes.Buffer
	zw := zip.NewWriter(&big)
	fw, _ := zw.CreateRaw(&zip.FileHeader{Name: "xl/workbook.xml", Method: zip.Deflate, UncompressedSize64: 300 << 20, CompressedSize64: 2})
	fw.Write([]byte{3, 0})
	zw.Close()
	var bad bytes.Buffer // a stored part whose bytes do not match its checksum
	zw = zip.NewWriter(&bad)
	fw, _ = zw.CreateRaw(&zip.FileHeader{Name: "xl/workbook.xml", Method: zip.Store, UncompressedSize64: 9, CompressedSize64: 9, CRC32: 1})
	fw.Write([]byte("<workbook"))
	zw.Close()
	tests := []struct {
		name string
		data []byte
		want string
		hint string
	}{
		{"not a zip", []byte("Run,T\nA-1,1000\n"), "not an XLSX workbook (zip: not a valid zip file)", "or as CSV with a .csv name"},
		{"empty file", nil, "zip: not a valid zip file", "CSV"},
		{"OLE2", []byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1 rest"), "an OLE2 file, not a zip: a workbook with a password, or an old .xls", "CSV"},
		{"a zip of something else", zipOf(t, part{"word/document.xml", "<w/>"}), "no workbook part xl/workbook.xml in the zip", "CSV"},
		{"no sheet", handBook(t, "", "", `<workbook xmlns="`+nsMain+`"><sheets/></workbook>`), "the workbook has no sheet", ""},
		{"workbook root", handBook(t, "", "", `<document/>`), "xl/workbook.xml:1:12: the root element is <document>, not <workbook>", "CSV"},
		{"date1904", handBook(t, "", "", `<workbook><workbookPr date1904="yes"/></workbook>`), `<workbookPr date1904="yes">: want 1, 0, true or false`, "CSV"},
		{"two sheets of one name", handBook(t, "", "", `<workbook xmlns:r="r"><sheets><sheet name="Runs" r:id="rId1"/><sheet name="RUNS" r:id="rId2"/></sheets></workbook>`),
			`the workbook has two sheets named "Runs" and "RUNS"; rename one`, ""},
		{"sheet without part", handBook(t, "", "", `<workbook xmlns:r="r"><sheets><sheet name="S" r:id="rId7"/></sheets></workbook>`), `name no part for the sheet (r:id "rId7")`, damaged},
		{"sheet part missing", zipOf(t, handParts("", "", "")[:3]...), "the sheet's part xl/worksheets/sheet1.xml is missing from the zip", damaged},
		{"two parts of one name", zipOf(t, append(handParts("", "", ""), part{"XL/WORKSHEETS/SHEET1.XML", "<worksheet/>"})...), "the zip holds two parts named xl/worksheets/sheet1.xml", damaged},
		{"part over the limit", big.Bytes(), "xl/workbook.xml is 300 MiB uncompressed, over the 256 MiB this reader takes from a part", split},
		{"checksum", bad.Bytes(), "zip: checksum error", "CSV"},
		{"chart sheet", sheet(`<chartsheet xmlns="` + nsMain + `"><drawing/></chartsheet>`), "it is a chart sheet, with no cells", "give --sheet with the name of a sheet of cells"},
		{"no sheetData", sheet(`<worksheet xmlns="` + nsMain + `"><cols/></worksheet>`), "xl/worksheets/sheet1.xml:1:97: no <sheetData>", damaged},
		{"row outside sheetData", sheet(`<worksheet><sheetPr><row r="1"/></sheetPr><sheetData/></worksheet>`), "a <row> outside <sheetData>", damaged},
		{"cut short", sheet(`<worksheet><sheetData><row r="1"><c r="A1"><v>1`), "the XML ends inside <v>: the file is cut short", damaged},
		{"syntax", sheet(`<worksheet><sheetData><row r="1"><c r="A1"><v>1</v></c></row></sheetData attr></worksheet>`), "xl/worksheets/sheet1.xml: XML syntax error on line 1", damaged},
		{"end tag", sheet(`<worksheet><sheetData><row r="1"><c r="A1"><v>1</c></row></sheetData></worksheet>`), "xl/worksheets/sheet1.xml:1:52: end tag </c> does not match <v>", damaged},
		{"end tag at the root", sheet(`<worksheet/></worksheet>`), "xl/worksheets/sheet1.xml:1:25: end tag </worksheet> with no element open", damaged},
		{"undeclared encoding", sheet(`<?xml version="1.0" encoding="UTF-16"?><worksheet/>`), `encoding "UTF-16" declared`, damaged},
		{"nesting", sheet(strings.Repeat("<a>", 100_000)), "elements nested over 128 deep", damaged},
		{"shared string out of range", row(`<c r="A1" t="s"><v>2</v></c>`), "cell A1: shared string 2 is not in the table (2 strings)", damaged},
		{"shared string negative", row(`<c r="A1" t="s"><v>-1</v></c>`), "cell A1: shared string -1 is not in the table", damaged},
		{"shared string not a number", row(`<c r="A1" t="s"><v>one</v></c>`), `cell A1: shared string "one" is not a number`, damaged},
		{"no shared strings", handBook(t, `<row r="1"><c t="s"><v>0</v></c></row>`, "", ""), "cell 1 of row 1: shared string 0 is not in the table (0 strings)", damaged},
		{"bad reference", row(`<c r="1A"><v>1</v></c>`), `cell reference "1A" is not a column and a row such as C7`, damaged},
		{"absolute reference", row(`<c r="$A$1"><v>1</v></c>`), `cell reference "$A$1"`, damaged},
		{"row 0", row(`<c r="A0"><v>1</v></c>`), `cell reference "A0"`, damaged},
		{"column past XFD", row(`<c r="XFE1"><v>1</v></c>`), `cell reference "XFE1"`, damaged},
		{"five letters", row(`<c r="AAAAA1"><v>1</v></c>`), `cell reference "AAAAA1"`, damaged},
		{"huge row", row(`<c r="A99999999999999999999"><v>1</v></c>`), `cell reference "A99999999999999999999"`, damaged},
		{"cell of another row", row(`<c r="A2"><v>1</v></c>`), "cell A2 is in row 1", damaged},
		{"cells out of order", row(`<c r="C1"><v>1</v></c><c r="B1"><v>2</v></c>`), "cell B1 is left of the cell before it (column 3)", damaged},
		{"a cell twice", row(`<c r="C1"><v>1</v></c><c r="C1"><v>2</v></c>`), "cell C1 is left of the cell before it", damaged},
		{"after the last column", row(`<c r="XFD1"><v>1</v></c><c><v>2</v></c>`), "cell 16385 of row 1: XLSX sheets have 16384 columns", damaged},
		{"unknown type", row(`<c r="A1" t="x"><v>1</v></c>`), `cell A1: unknown cell type t="x"`, damaged},
		{"style", row(`<c r="A1" s="bold"><v>1</v></c>`), `cell style "bold" is not a number`, damaged},
		{"two values", row(`<c r="A1"><v>1</v><v>2</v></c>`), "cell A1 has two <v>", damaged},
		{"two inline strings", row(`<c r="A1" t="inlineStr"><is/><is/></c>`), "cell A1 has two <is>", damaged},
		{"stray element in a cell", row(`<c r="A1"><x><v>1</v></x></c>`), "<x> in cell A1, where a value, a formula or a string belong", damaged},
		{"stray element in a row", row(`<x/>`), "<x> in row 1, where only cells belong", damaged},
		{"stray element in sheetData", handBook(t, `<c r="A1"/>`, "", ""), "<c> in <sheetData>, where only rows belong", damaged},
		{"rows out of order", handBook(t, `<row r="3"/><row r="2"/>`, "", ""), "row 2 comes after row 3: rows go top to bottom", damaged},
		{"row twice", handBook(t, `<row r="3"/><row r="3"/>`, "", ""), "row 3 comes after row 3", damaged},
		{"row 0", handBook(t, `<row r="0"/>`, "", ""), `row number "0" is not a number from 1 on`, damaged},
		{"row -1", handBook(t, `<row r="-1"/>`, "", ""), `row number "-1" is not a number from 1 on`, damaged},
		{"row 1.0", handBook(t, `<row r="1.0"/>`, "", ""), `row number "1.0" is not a number from 1 on`, damaged},
		{"row past the last", handBook(t, `<row r="1048576"/><row/>`, "", ""), "row 1048577: XLSX sheets have 1048576 rows", damaged},
		{"shared strings root", zipOf(t, append(handParts(`<row r="1"/>`, "", ""), part{"xl/sharedStrings.xml", "<strings/>"})...),
			"xl/sharedStrings.xml:1:11: the root element is <strings>, not <sst>", damaged},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadSheet("runs.xlsx", bytes.NewReader(tt.data), "")
			var e *Error
			if !errors.As(err, &e) || !errors.Is(err, ErrInvalid) {
				t.Fatalf("got %v, want an *Error", err)
			}
			if !strings.Contains(e.Msg, tt.want) || !strings.Contains(e.Help, tt.hint) {
				t.Errorf("got %q (hint %q); want %q (hint with %q)", e.Msg, e.Help, tt.want, tt.hint)
			}
		})
	}
}

// A missing sheet is named with the workbook's sheets, as before.
func TestReadXLSXMissingSheet(t *testing.T) {
	data := written(t, func(f *excelize.File) {
		_, err := f.NewSheet("Runs 2025")
		must(t, err)
		put(t, f, "Runs 2025", 1, "Run")
	})
	if _, _, err := excelizeRows(data, "2024"); !errors.As(err, new(excelize.ErrSheetNotExist)) { // reference: excelize v2 GetRows
		t.Fatalf("excelize: %v", err)
	}
	_, err := ReadSheet("runs.xlsx", bytes.NewReader(data), "2024")
	if want := `sheet "runs.xlsx, sheet 2024": no sheet "2024"; the workbook has "Sheet1", "Runs 2025"`; err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
}

// The reader's limits: lowered here, so that small files pass them.
func TestReadXLSXLimits(t *testing.T) {
	defer func(file, part int64, cells, shared int) {
		maxXLSXFile, maxXLSXPart, maxXLSXCells, maxXLSXShared = file, part, cells, shared
	}(maxXLSXFile, maxXLSXPart, maxXLSXCells, maxXLSXShared)
	rng := rand.New(rand.NewPCG(5, 6))
	noise := strings.Map(func(rune) rune { return rune(rng.IntN(0x7e-0x20) + 0x20) }, strings.Repeat(" ", 1<<21)) // does not zip to under 1 MiB
	bomb := handBook(t, `<row r="1"><c r="A1"><v>1</v></c></row>`+strings.Repeat(`<row/>`, 400_000), "", "")      // 2.4 MB of XML, a few kB zipped
	tests := []struct {
		name  string
		set   func()
		data  []byte
		want  string
		under bool // the file reads when the limit is not lowered
	}{
		{"file", func() { maxXLSXFile = 1 << 20 }, zipOf(t, append(handParts(`<row r="1"><c r="A1"><v>1</v></c></row>`, "", ""), part{"xl/media/noise.bin", noise})...), "the file is over 1 MiB", true},
		{"zip bomb", func() { maxXLSXPart = 1 << 20 }, bomb, "xl/worksheets/sheet1.xml is 2 MiB uncompressed, over the 1 MiB", true},
		{"cells", func() { maxXLSXCells = 100 }, handBook(t, `<row r="1"><c r="A1"><v>1</v></c></row><row r="2"><c r="CW2"><v>1</v></c></row>`, "", ""), "the sheet holds over 100 cells", true},
		{"shared strings", func() { maxXLSXShared = 2 }, handBook(t, `<row r="1"><c r="A1"><v>1</v></c></row>`, "<si/><si/><si/>", ""), "xl/sharedStrings.xml has over 2 shared strings", true},
	}
	for _, tt := range tests {
		maxXLSXFile, maxXLSXPart, maxXLSXCells, maxXLSXShared = 1<<30, 256<<20, 1<<24, 1<<24
		if _, _, err := ourRows(tt.data, ""); tt.under && err != nil {
			t.Errorf("%s: under the limit: %v", tt.name, err)
		}
		tt.set()
		_, err := ReadSheet("runs.xlsx", bytes.NewReader(tt.data), "")
		var e *Error
		if !errors.As(err, &e) || !strings.Contains(e.Msg, tt.want) || !strings.Contains(e.Help, "split the workbook") {
			t.Errorf("%s: got %v, want %q and a hint to split", tt.name, err, tt.want)
		}
	}
}

// XLSX date serials convert as excelize converts them, to the
// nanosecond, in both date systems; foilrun then rounds to the second.
// Hand-worked: 1 is 1900-01-01, 59 1900-02-28, 61 1900-03-01 (60 the day
// that never was, read as 1900-02-28), 45720.375 2025-03-04 09:00; 0 of
// 1904 is 1904-01-01.
func TestSerialTime(t *testing.T) {
	t.Parallel()
	var serials []float64
	for v := range 101 {
		serials = append(serials, float64(v))
	}
	for v := 58.0; v <= 62.5; v += 1.0 / 96 {
		serials = append(serials, v)
	}
	for d := range 70 { // a day's seconds, and near half seconds, where rounding turns
		for s := 0; s < 86400; s += 641 {
			for _, f := range []float64{0, 0.4999, 0.5, 0.5009, 0.501, 0.9999} {
				serials = append(serials, float64(d)+(float64(s)+f)/86400)
			}
		}
	}
	rng := rand.New(rand.NewPCG(14, 1))
	for range 20_000 {
		serials = append(serials, rng.Float64()*100, rng.Float64()*120_000, rng.Float64()*3e6, float64(rng.IntN(200_000))+float64(rng.IntN(86400))/86400)
	}
	serials = append(serials, 1e5, 1e5+0.5, 45720.375, 2958465.999999, 1e9, 9.99e9, math.Nextafter(62, 0), math.Nextafter(60, 0), math.Nextafter(1, 0), 5e-324)
	for _, v := range serials {
		for _, d1904 := range []bool{false, true} {
			want, _ := excelize.ExcelDateToTime(v, d1904) // reference: excelize v2 ExcelDateToTime
			got, err := serialTime(v, d1904)
			if err != nil || !got.Equal(want) {
				t.Fatalf("serial %v (1904 %v): got %v, %v; want %v", v, d1904, got, err, want)
			}
		}
	}
	for _, c := range []struct {
		v    float64
		d    bool
		want time.Time
	}{
		{1, false, time.Date(1900, 1, 1, 0, 0, 0, 0, time.UTC)},
		{59, false, time.Date(1900, 2, 28, 0, 0, 0, 0, time.UTC)},
		{60, false, time.Date(1900, 2, 28, 0, 0, 0, 0, time.UTC)},
		{61, false, time.Date(1900, 3, 1, 0, 0, 0, 0, time.UTC)},
		{45720.375, false, time.Date(2025, 3, 4, 9, 0, 0, 0, time.UTC)},
		{0, true, time.Date(1904, 1, 1, 0, 0, 0, 0, time.UTC)},
		{44258.375, true, time.Date(2025, 3, 4, 9, 0, 0, 0, time.UTC)},
	} {
		if got, err := serialTime(c.v, c.d); err != nil || !got.Equal(c.want) {
			t.Errorf("serial %v (1904 %v): got %v, %v; want %v", c.v, c.d, got, err, c.want)
		}
	}
	for _, v := range []float64{-1, -1e-9, math.NaN(), math.Inf(1), 1e10, 1e300} {
		if got, err := serialTime(v, false); err == nil {
			t.Errorf("serial %v: got %v, want an error", v, got)
		}
	}
}

// Cells as dates: the same as before the reader changed (excelize's
// conversion, rounded to the second, then the year check) for serials of
// the 1900 system, and the year check for those of 1904 too.
func TestDateSerials(t *testing.T) {
	t.Parallel()
	before := func(cell string) (time.Time, error) { // reference: excelize v2 ExcelDateToTime, in date as it was
		v, _ := strconv.ParseFloat(cell, 64)
		d, err := excelize.ExcelDateToTime(v, false)
		if err != nil {
			return time.Time{}, err
		}
		d = d.UTC().Round(time.Second)
		if d.Year() < 1900 || d.Year() > 2199 {
			return time.Time{}, fmt.Errorf("year %d", d.Year())
		}
		return d, nil
	}
	rng := rand.New(rand.NewPCG(3, 4))
	cells := []string{"0", "0.5", "1", "59", "60", "61", "61.99999", "45720.375", "100000", "110957.99999", "110958", "200000", "1e5", "-1"}
	for range 5000 {
		cells = append(cells, strconv.FormatFloat(rng.Float64()*120_000, 'f', rng.IntN(12), 64))
	}
	for _, cell := range cells {
		want, werr := before(cell)
		got, err := sheetDate(cell, "", true, false)
		if (err != nil) != (werr != nil) || !got.Equal(want) {
			t.Errorf("sheetDate(%q): got %v, %v; want %v, %v", cell, got, err, want, werr)
		}
	}
	last := func(epoch time.Time) float64 { // the serial of 2199-12-31 12:00
		return float64(time.Date(2199, 12, 31, 12, 0, 0, 0, time.UTC).Unix()-epoch.Unix()) / 86400
	}
	for _, c := range []struct {
		cell     string
		date1904 bool
		want     string // "" a date
	}{
		{"0", true, ""}, {"-1", true, "never negative"}, {"NaN", true, "no calendar date has serial NaN"}, {"1e10", false, "no calendar date"},
		{fmt.Sprint(last(epoch1904)), true, ""}, {fmt.Sprint(last(epoch1904) + 1), true, "(year 2200)"},
		{fmt.Sprint(last(epoch1900)), false, ""}, {fmt.Sprint(last(epoch1900) + 1), false, "(year 2200)"},
		{"1", false, ""}, {"0.99", false, "(year 1899)"},
	} {
		_, err := sheetDate(c.cell, "", true, c.date1904)
		if c.want == "" && err != nil || c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)) {
			t.Errorf("%q (1904 %v): got %v, want %q", c.cell, c.date1904, err, c.want)
		}
	}
}

// runsBook is a workbook of n runs as a lab keeps them: codes, dates,
// temperatures, flows, coverage, operators and now and then a note.
func runsBook(t testing.TB, n int) []byte {
	return written(t, func(f *excelize.File) {
		put(t, f, "Sheet1", 1, "Run", "Date", "T growth (C)", "t (min)", "CH4 (sccm)", "H2 (sccm)", "Coverage (%)", "Operator", "Note")
		day := time.Date(2024, 1, 8, 9, 0, 0, 0, time.UTC)
		for i := 1; i <= n; i++ {
			note := ""
			if i%7 == 0 {
				note = "ripples near the edge"
			}
			put(t, f, "Sheet1", i+1, fmt.Sprintf("R-%05d", i), day.Add(time.Duration(i)*3*time.Hour), 960+float64(i%100)/2, 1+i%30,
				5+i%20, 20+i%5, 50+float64(i%500)/10, []string{"operator 1", "operator 2", "operator 3"}[i%3], note)
		}
	})
}

// The reader against excelize on a 5,000-row sheet of runs.
func BenchmarkReadXLSX5k(b *testing.B) {
	data := runsBook(b, 5000)
	want, _, err := excelizeRows(data, "")
	if err != nil {
		b.Fatal(err)
	}
	if got, _, err := ourRows(data, ""); err != nil || diffRows(got, want) != "" {
		b.Fatalf("the readers differ: %v %s", err, diffRows(got, want))
	}
	b.Run("ours", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, _, err := ourRows(data, ""); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("excelize", func(b *testing.B) { // reference: excelize v2 OpenReader and GetRows with RawCellValue
		b.ReportAllocs()
		for b.Loop() {
			if _, _, err := excelizeRows(data, ""); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// zipPart is a part of the zip in data, "" when it has none.
func zipPart(data []byte, name string) string {
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return ""
	}
	for _, f := range zr.File {
		if f.Name == name {
			rc, err := f.Open()
			if err != nil {
				return ""
			}
			b, _ := io.ReadAll(rc)
			return string(b)
		}
	}
	return ""
}

// FuzzReadXLSX: no input panics the reader or makes it hold more than its
// limits; every error of ReadSheet matches ErrInvalid; and whenever both
// read a workbook, the reader's sheets and rows are excelize's. Each input
// is read three times: data as a file, a workbook of one sheet made of the
// sheet and shared-strings XML given (no shared strings when ""), and one
// that genSheet makes from prog: byte mutations break XML more often than
// not, and these workbooks are well formed.
func FuzzReadXLSX(f *testing.F) {
	seeds := [][]byte{
		written(f, func(x *excelize.File) {
			put(f, x, "Sheet1", 1, "Run", "T", "ok", " pad ", 2.5, -1e-7)
			put(f, x, "Sheet1", 3, "R-1", 1000, true, "007", time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC))
			must(f, x.SetCellFormula("Sheet1", "F4", "B3*2"))
			must(f, x.SetCellRichText("Sheet1", "C5", []excelize.RichTextRun{{Text: "a", Font: &excelize.Font{Bold: true}}, {Text: "b"}}))
			_, err := x.NewSheet("Second")
			must(f, err)
		}),
		handBook(f, `<row r="1"><c r="A1" t="inlineStr"><is><r><t>in</t></r><t>line_x000D_</t></is></c><c t="s"><v>1</v></c><c r="E1" t="b"><v>1</v></c></row>`+
			`<row r="3"><c r="B3" t="e"><f>1/0</f><v>#DIV/0!</v></c><c t="d"><v>2025-03-04T00:00:00Z</v></c></row><row><c r="C4" t="str"><f>""</f></c></row>`,
			`<si><t>x</t><rPh sb="0" eb="1"><t>y</t></rPh></si><si><r><t>r1</t></r><r><t>r2</t></r></si>`, ""),
		runsBook(f, 20),
	}
	progs := [][]byte{
		[]byte("\x01\x00\x05\x01\x09\x02\x0d\x03\x02\x00\x06\x08\x0a\x09\x0e\x1c\x12\x83\x00\x02\x16\x0c\x1a\x10\x1e\x14\x22\x18\x26\x1d\x00\x81\x2a\x80\x2e\x80\x32\x04\x36\x46\x3b\x0a\x7e\x05"),
		[]byte("\x00\x80\x03\x80\x07\x88\x0b\x10\x00\x03\x42\x14\x47\x18\x63\x4c\x00\x80\x67\x90\x6b\x94\x00\x01\x43\x1c"),
	}
	for i, s := range seeds {
		f.Add(s, zipPart(s, "xl/worksheets/sheet1.xml"), zipPart(s, "xl/sharedStrings.xml"), progs[i%len(progs)])
	}
	f.Add(seeds[0][:len(seeds[0])/2], "<worksheet><sheetData><row><c><v>1", "", []byte{})
	f.Add([]byte("PK\x03\x04 not really"), `<worksheet><sheetData><row r="2"><c r="B2"><v>1</v></c></row></sheetData></worksheet>`, "<sst/>", []byte("\x02"))
	f.Fuzz(func(t *testing.T, data []byte, sheet, shared string, prog []byte) {
		gsheet, gshared := genSheet(prog)
		for _, in := range [][]byte{data, oneSheetBook(t, sheet, shared), oneSheetBook(t, gsheet, gshared)} {
			if _, err := ReadSheet("f.xlsx", bytes.NewReader(in), ""); err != nil && !errors.Is(err, ErrInvalid) {
				t.Fatalf("error %v does not match ErrInvalid", err)
			}
			rows, b, err := ourRows(in, "")
			if err != nil {
				continue
			}
			cells := 0
			for _, r := range rows {
				cells += len(r)
			}
			if cells > maxXLSXCells || len(rows) > maxXLSXRows {
				t.Fatalf("%d rows, %d cells: over the limits", len(rows), cells)
			}
			want, list, ok := excelizeClean(in) // reference: excelize v2 GetRows with RawCellValue
			if !ok {
				continue
			}
			if !slices.Equal(sheetNames(b), list) {
				t.Fatalf("sheets %q, excelize %q", sheetNames(b), list)
			}
			if d := diffRows(rows, want); d != "" {
				t.Fatalf("against excelize: %s", d)
			}
		}
	})
}

// oneSheetBook is a workbook of sheet "S" whose part holds sheet, with the
// shared strings shared (none when "").
func oneSheetBook(t testing.TB, sheet, shared string) []byte {
	t.Helper()
	parts := []part{{"_rels/.rels", rootRels}, {"xl/_rels/workbook.xml.rels", bookRels}, {"xl/workbook.xml", oneSheet}, {"xl/worksheets/sheet1.xml", sheet}}
	if shared != "" {
		parts = append(parts, part{"xl/sharedStrings.xml", shared})
	}
	return zipOf(t, parts...)
}

// genSheet makes well-formed sheet and shared-string XML from prog, two
// bytes a step: op%4 is 0 for a new row (arg%4 rows down; no r when arg
// has its top bit), 1 for a shared string, else a cell (arg%3 columns
// right, but no r and none when arg has its top bit; its type from arg,
// its text from op, a formula when op has bit 6).
func genSheet(prog []byte) (sheet, shared string) {
	texts := []string{"", " ", "0", "007", "-1.5E-3", "1e5", "a_x000D_b", "_x005F_x0041_", "&amp;&lt;&#x41;", "µm 温度", "  pad  ",
		"1", "#N/A", "2025-03-04T09:30:00Z", "x\ny", "<![CDATA[3]]>", "4<!-- c -->5", "_xD83D_", "3"}
	types := []string{"", "n", "s", "str", "inlineStr", "b", "e", "d"}
	var sh, ss strings.Builder
	sh.WriteString(`<worksheet xmlns="` + nsMain + `"><dimension ref="A1"/><sheetData>`)
	ss.WriteString(`<sst xmlns="` + nsMain + `">`)
	row, col, open, sis := 0, 0, false, 0
	for i := 0; i+1 < len(prog); i += 2 {
		op, arg := prog[i], prog[i+1]
		text := texts[int(op>>2)%len(texts)]
		switch op % 4 {
		case 0:
			if open {
				sh.WriteString("</row>")
			}
			row, col, open = row+1+int(arg%4), 0, true
			if arg&0x80 != 0 {
				row -= int(arg % 4) // a row without r follows the one before
				sh.WriteString("<row>")
			} else {
				fmt.Fprintf(&sh, `<row r="%d" spans="1:3">`, row)
			}
		case 1:
			sis++
			switch arg % 4 {
			case 0:
				fmt.Fprintf(&ss, "<si><t>%s</t></si>", text)
			case 1:
				fmt.Fprintf(&ss, `<si><r><t xml:space="preserve">%s</t></r><r><rPr><b/></rPr><t>%s</t></r></si>`, text, texts[int(arg>>2)%len(texts)])
			case 2:
				fmt.Fprintf(&ss, `<si><t>%s</t><rPh sb="0" eb="1"><t>ph</t></rPh><phoneticPr fontId="1"/></si>`, text)
			default:
				ss.WriteString("<si/>")
			}
		default:
			if !open {
				row, col, open = row+1, 0, true
				fmt.Fprintf(&sh, `<row r="%d">`, row)
			}
			col++
			cell := "<c"
			if arg&0x80 == 0 {
				col += int(arg % 3)
				name, _ := excelize.CoordinatesToCellName(col, row)
				cell += ` r="` + name + `"`
			}
			if typ := types[int(arg>>2)%len(types)]; typ != "" {
				cell += ` t="` + typ + `"`
			}
			if arg&0x40 != 0 {
				cell += ` s="1"`
			}
			cell += ">"
			if op&0x40 != 0 {
				cell += "<f>A1</f>"
			}
			switch {
			case strings.Contains(cell, `t="inlineStr"`):
				cell += "<is><t>" + text + "</t></is>"
			case strings.Contains(cell, `t="s"`) && text != "":
				cell += "<v>" + strconv.Itoa(int(op>>2)%(sis+3)) + "</v>" // three more strings end the table
			case text != "" || op&0x20 != 0:
				cell += "<v>" + text + "</v>"
			}
			sh.WriteString(cell + "</c>")
		}
	}
	if open {
		sh.WriteString("</row>")
	}
	sh.WriteString(`</sheetData><pageMargins left="0.7"/></worksheet>`)
	ss.WriteString("<si><t>end 1</t></si><si><r><t>end</t></r><r><t> 2</t></r></si><si/></sst>")
	return sh.String(), ss.String()
}

// A value cut into many pieces by comments (as a hostile file may be)
// reads whole: 50,000 pieces, each a digit, join to its 50,000 digits.
// The pieces are gathered in linear time (0.02 s; joined by += it took
// 0.57 s, growing with the square of the pieces).
func TestReadXLSXCutText(t *testing.T) {
	const pieces = 50000
	var v, want strings.Builder
	for i := range pieces {
		d := strconv.Itoa(i % 10)
		v.WriteString(d + "<!---->")
		want.WriteString(d)
	}
	rows, _, err := ourRows(handBook(t, `<row r="1"><c r="A1"><v>`+v.String()+`</v></c></row>`, "", ""), "")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1 || len(rows[0]) != 1 || rows[0][0] != want.String() {
		t.Errorf("got %d rows, want the one cell of %d digits", len(rows), pieces)
	}
}
