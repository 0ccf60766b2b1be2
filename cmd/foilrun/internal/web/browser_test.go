package web

import (
	"bytes"
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"flag"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
	"github.com/foilrun/foilrun/store/sqlite"
)

// chromiumPath is Debian's Chromium, the browser the test drives.
const chromiumPath = "/usr/bin/chromium"

var screenshots = flag.String("screenshots", "", "keep the browser test's screenshots in this directory (default: a test temporary directory)")

// stepTimeout limits each browser step; the whole test takes a few seconds.
const stepTimeout = 15 * time.Second

// browserRuns is how many demo runs the browser test's log holds.
const browserRuns = 12

// TestBrowser drives the served pages in a real Chromium: the run list and
// its filter, a run's page with a note and a micrograph upload, the
// checklist in print media (one page of PDF), and the analysis pages
// (/best, /rank, /fit, /window). Every page's screenshot must not be blank.
func TestBrowser(t *testing.T) {
	t.Parallel()
	if _, err := os.Stat(chromiumPath); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("no browser at %s under CI=true: install it (apt-get install -y chromium)", chromiumPath)
		}
		t.Skipf("no browser at %s: install Debian's chromium to run the browser test", chromiumPath)
	}
	root := startBrowser(t)
	// The back ends walk one after the other, each in a tab of its own:
	// a background tab does not take typed keys (tried again with focus
	// emulation and with each tab brought to the front for its typing,
	// both lost keys), so they cannot share the browser in parallel. The
	// test as a whole runs in parallel with the package's other tests.
	t.Run("sqlite", func(t *testing.T) {
		log, err := sqlite.Open(context.Background(), filepath.Join(t.TempDir(), "browser.db"))
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { log.Close() })
		walkPages(t, root, log)
	})
	t.Run("postgres", func(t *testing.T) {
		u := os.Getenv(postgresEnv)
		if u == "" {
			if os.Getenv("CI") == "true" {
				t.Fatalf("%s is not set and CI=true: source .ci/postgres first", postgresEnv)
			}
			t.Skipf("%s is not set: source .ci/postgres from the repository root to run this back end too", postgresEnv)
		}
		log, err := postgres.Open(context.Background(), pgSchema(t, u))
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { log.Close() })
		walkPages(t, root, log)
	})
}

// postgresEnv names the PostgreSQL database the store tests use (.ci/postgres
// exports it); the browser test works in a schema of its own there.
const postgresEnv = "FOILRUN_TEST_POSTGRES"

// pgSchema creates an empty schema in the database at base, dropped when
// the test ends, and returns the URL that works in it.
func pgSchema(t testing.TB, base string) string {
	t.Helper()
	b := make([]byte, 6)
	rand.Read(b)
	name := "web_" + hex.EncodeToString(b)
	db, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	if _, err := db.ExecContext(ctx, "CREATE SCHEMA "+name); err != nil {
		db.Close()
		t.Fatalf("create a schema for the browser test: %v", err)
	}
	t.Cleanup(func() {
		db.ExecContext(ctx, "DROP SCHEMA "+name+" CASCADE")
		db.Close()
	})
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	q := u.Query()
	q.Set("search_path", name)
	u.RawQuery = q.Encode()
	return u.String()
}

// walkPages serves log, seeded with the demo runs, and walks the pages in
// a new tab of the browser root.
func walkPages(t *testing.T, root context.Context, log store.RunLog) {
	dir := t.TempDir()
	paths, err := demolab.Lay(dir)
	if err != nil {
		t.Fatal(err)
	}
	code := seedBrowserLog(t, log, paths)
	srv, err := New(Config{Log: log, Files: filepath.Join(dir, "files"),
		Now: func() time.Time { return time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC) }})
	if err != nil {
		t.Fatal(err)
	}
	hs := httptest.NewServer(srv.Handler())
	t.Cleanup(hs.Close)
	shots := *screenshots
	if shots == "" {
		shots = t.TempDir()
	} else if shots = filepath.Join(shots, path.Base(t.Name())); os.MkdirAll(shots, 0o755) != nil {
		t.Fatalf("cannot make the screenshot directory %s", shots)
	}
	b := &browser{t: t, ctx: openTab(t, root, hs.URL+"/runs"), base: hs.URL, shots: shots}

	b.runList()
	b.runPage(code, filepath.Join(dir, "micrograph.png"))
	b.checklist(code)
	for _, p := range []string{"/best", "/rank", "/fit", "/window"} {
		b.analysisPage(p)
	}
}

// seedBrowserLog fills log with the demo runs, one more run logged with
// its site file (so it has a checklist) and a few notes, and returns the
// code of that run, the newest.
func seedBrowserLog(t *testing.T, log store.RunLog, paths demolab.Paths) string {
	t.Helper()
	ctx := context.Background()
	if err := demolab.Seed(ctx, log, paths, browserRuns-1); err != nil {
		t.Fatal(err)
	}
	runs, err := log.List(ctx, store.Filter{Newest: true})
	if err != nil {
		t.Fatal(err)
	}
	rec, err := log.Record(ctx, runs[0].Code)
	if err != nil {
		t.Fatal(err)
	}
	bundle := store.Bundle{Snapshots: []store.Snapshot{store.NewFileSnapshot(store.SnapshotSite, "site", paths.Site, []byte(demolab.Site))}}
	for _, h := range []string{rec.RecipeHash, rec.FurnaceHash} {
		snap, err := log.Snapshot(ctx, h)
		if err != nil {
			t.Fatal(err)
		}
		bundle.Snapshots = append(bundle.Snapshots, snap)
	}
	next := rec.Started.Add(26 * time.Hour)
	rec.Code, rec.SiteHash = store.FormatCode("", next, browserRuns), bundle.Snapshots[0].SHA256
	rec.Started, rec.Ended = next, next.Add(rec.Ended.Sub(rec.Started))
	rec.Notes = nil
	bundle.Runs = []store.RunRecord{rec}
	if _, err := log.Import(ctx, bundle, nil); err != nil {
		t.Fatal(err)
	}
	runs, err = log.List(ctx, store.Filter{Newest: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(runs) != browserRuns || runs[0].Code != rec.Code {
		t.Fatalf("seeded log lists %d runs, newest %s; want %d, newest %s", len(runs), runs[0].Code, browserRuns, rec.Code)
	}
	for i, r := range runs[:3] {
		note := store.Note{At: r.Started.Add(time.Hour), Text: fmt.Sprintf("foil %d annealed, surface looked even", i+1)}
		if err := log.AddNote(ctx, r.Code, note); err != nil {
			t.Fatal(err)
		}
	}
	return rec.Code
}

// startBrowser starts one Chromium for the whole test and stops it when
// the test ends; each back end's walk opens a tab of its own in it
// (openTab). The start has no timeout: a timeout there would stop the
// whole browser.
func startBrowser(t *testing.T) context.Context {
	t.Helper()
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(chromiumPath), chromedp.NoSandbox, chromedp.WindowSize(1280, 900),
		chromedp.DisableGPU, chromedp.UserDataDir(t.TempDir()),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("no-first-run", true),
		chromedp.Flag("disable-quic", true))
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	bctx, cancelBrowser := chromedp.NewContext(actx)
	t.Cleanup(func() { cancelBrowser(); cancelAlloc() })
	if err := chromedp.Do(bctx, chromedp.Navigate("about:blank")); err != nil {
		t.Fatalf("start %s: %v", chromiumPath, err)
	}
	return bctx
}

// openTab opens a new tab of the browser on its first page, closed when
// the (sub)test ends.
func openTab(t *testing.T, browser context.Context, first string) context.Context {
	t.Helper()
	tctx, cancel := chromedp.NewContext(browser)
	t.Cleanup(cancel)
	if err := chromedp.Do(tctx, chromedp.Navigate(first)); err != nil {
		t.Fatalf("open %s in a new tab: %v", first, err)
	}
	return tctx
}

// browser is the test's browser tab and where its screenshots go.
type browser struct {
	t     *testing.T
	ctx   context.Context // the browser's context, without a timeout
	base  string          // the server's URL
	shots string          // the screenshot directory
}

// step is a context for one step, limited to stepTimeout.
func (b *browser) step() (context.Context, context.CancelFunc) {
	return context.WithTimeout(b.ctx, stepTimeout)
}

// do runs actions in one step and fails the test with what on error.
func (b *browser) do(what string, actions ...chromedp.Action[chromedp.Void]) {
	b.t.Helper()
	ctx, cancel := b.step()
	defer cancel()
	if err := chromedp.Do(ctx, actions...); err != nil {
		b.t.Fatalf("%s: %v", what, err)
	}
}

// eval evaluates a JavaScript expression in one step.
func eval[T any](b *browser, what, expr string) T {
	b.t.Helper()
	ctx, cancel := b.step()
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		b.t.Fatalf("%s: %v", what, err)
	}
	return v
}

// text is the visible text of the first element sel matches.
func (b *browser) text(sel string) string {
	b.t.Helper()
	ctx, cancel := b.step()
	defer cancel()
	s, err := chromedp.Run(ctx, chromedp.Text(sel))
	if err != nil {
		b.t.Fatalf("read %s: %v", sel, err)
	}
	return s
}

// count is the number of elements sel matches now.
func (b *browser) count(sel string) int {
	b.t.Helper()
	return eval[int](b, "count "+sel, fmt.Sprintf("document.querySelectorAll(%q).length", sel))
}

// shot saves a full-page screenshot as name.png and checks it is not blank.
func (b *browser) shot(name string) {
	b.t.Helper()
	ctx, cancel := b.step()
	defer cancel()
	data, err := chromedp.Run(ctx, fullScreenshot)
	if err != nil {
		b.t.Fatalf("screenshot %s: %v", name, err)
	}
	path := filepath.Join(b.shots, name+".png")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		b.t.Fatalf("screenshot %s: %v", name, err)
	}
	if err := notBlank(img); err != nil {
		b.t.Errorf("screenshot %s (%s): %v", name, path, err)
	}
}

// fullScreenshot captures the whole page as a PNG, as
// chromedp.FullScreenshot(100) does, but asks Chromium to encode for speed
// (less compression, the same pixels).
func fullScreenshot(ctx context.Context, t *chromedp.Target) ([]byte, error) {
	yes := true
	r, err := cdp.Call(ctx, t, page.CaptureScreenshot, page.CaptureScreenshotParams{
		Format: page.CaptureScreenshotFormatPng, CaptureBeyondViewport: &yes, FromSurface: &yes, OptimizeForSpeed: &yes})
	if err != nil {
		return nil, err
	}
	return r.Data, nil
}

// Thresholds of a non-blank page: at least minInk of the pixels differ
// from the page's background (its most common colour) and at least
// minColours distinct colours appear. A page of text and tables covers a
// few per cent; an empty or error-free white page covers none (chosen by
// looking at the screenshots, not from a standard).
const (
	minInk     = 0.01
	minColours = 8
)

// notBlank reports whether img looks like a drawn page. Pixels are
// counted per run of one colour along a row (a page is mostly long runs
// of its background), so the map is touched once per run, not per pixel.
func notBlank(img image.Image) error {
	counts := map[[4]uint32]int{}
	r := img.Bounds()
	at := colourAt(img)
	for y := r.Min.Y; y < r.Max.Y; y++ {
		var run [4]uint32
		n := 0
		for x := r.Min.X; x < r.Max.X; x++ {
			if c := at(x, y); c != run || n == 0 {
				if n > 0 {
					counts[run] += n
				}
				run, n = c, 0
			}
			n++
		}
		if n > 0 {
			counts[run] += n
		}
	}
	background := 0
	for _, n := range counts {
		background = max(background, n)
	}
	total := r.Dx() * r.Dy()
	ink := 1 - float64(background)/float64(total)
	if ink < minInk {
		return fmt.Errorf("only %.2f%% of the pixels differ from the background, want at least %.0f%%", 100*ink, 100*minInk)
	}
	if len(counts) < minColours {
		return fmt.Errorf("%d distinct colours, want at least %d", len(counts), minColours)
	}
	return nil
}

// colourAt returns a function giving the colour of a pixel of img as
// img.At(x, y).RGBA() does (16-bit, alpha-premultiplied), reading the
// pixels of the RGBA and NRGBA images png.Decode returns for screenshots
// directly rather than through a color.Color per pixel.
func colourAt(img image.Image) func(x, y int) [4]uint32 {
	rgba := func(c color.Color) [4]uint32 {
		r, g, b, a := c.RGBA()
		return [4]uint32{r, g, b, a}
	}
	switch m := img.(type) {
	case *image.RGBA:
		return func(x, y int) [4]uint32 {
			p := m.Pix[m.PixOffset(x, y):]
			return rgba(color.RGBA{p[0], p[1], p[2], p[3]})
		}
	case *image.NRGBA:
		return func(x, y int) [4]uint32 {
			p := m.Pix[m.PixOffset(x, y):]
			return rgba(color.NRGBA{p[0], p[1], p[2], p[3]})
		}
	}
	return func(x, y int) [4]uint32 { return rgba(img.At(x, y)) }
}

// runList opens /runs, checks every run is listed, then filters with the
// where box and checks the rows and the count shrink.
func (b *browser) runList() {
	b.t.Helper()
	b.do("open /runs", chromedp.Navigate(b.base+"/runs"), chromedp.WaitVisible("#runs"))
	if got := b.count("#runs tbody tr"); got != browserRuns {
		b.t.Errorf("/runs shows %d rows, want %d", got, browserRuns)
	}
	before := b.text("#count")
	if want := fmt.Sprintf("%d in the log", browserRuns); !strings.Contains(before, want) {
		b.t.Errorf("#count reads %q, want it to contain %q", before, want)
	}
	b.shot("runs")
	const where = "growth_temperature_c >= 1000"
	b.do("filter "+where+" with a coverage column",
		chromedp.SetValue("#where", where),
		chromedp.Click(`input[name="metric"][value="coverage"]`),
		chromedp.Click("#apply"),
		chromedp.WaitVisible("#runs"),
		chromedp.WaitReady(`#where[value="growth_temperature_c >= 1000"]`))
	rows := b.count("#runs tbody tr")
	if rows == 0 || rows >= browserRuns {
		b.t.Errorf("after %q /runs shows %d rows, want some but fewer than %d", where, rows, browserRuns)
	}
	after := b.text("#count")
	if want := fmt.Sprintf("%d shown · %d matching", rows, rows); !strings.Contains(after, want) {
		b.t.Errorf("#count after the filter reads %q, want it to contain %q", after, want)
	}
	if head := b.text("#runs thead"); !strings.Contains(head, "coverage") {
		b.t.Errorf("the filtered list's header reads %q, want a coverage column", head)
	}
	b.shot("runs-filtered")
	b.do("clear the filter", chromedp.Navigate(b.base+"/runs"), chromedp.WaitVisible("#runs"))
}

// runPage opens a run from the list by its code, adds a note and uploads
// a synthetic micrograph.
func (b *browser) runPage(code, micrograph string) {
	b.t.Helper()
	link := fmt.Sprintf(`#runs a[href="/runs/%s"]`, code)
	b.do("open run "+code, chromedp.Click(link), chromedp.WaitVisible("#outcomes"))
	if h1 := b.text("h1"); h1 != code {
		b.t.Errorf("run page heading %q, want %q", h1, code)
	}
	notes := b.count("#notes li")
	const note = "browser test: edge of the foil curled"
	b.do("add a note",
		chromedp.SendKeys("#note", note),
		chromedp.SendKeys("#note-operator", "operator B"),
		chromedp.Click("#add-note"),
		chromedp.WaitVisible(fmt.Sprintf("#notes li:nth-child(%d)", notes+1)))
	if got := b.count("#notes li"); got != notes+1 {
		b.t.Errorf("%d notes after adding one, want %d", got, notes+1)
	}
	all := b.text("#notes")
	if !strings.Contains(all, note) {
		b.t.Errorf("#notes reads %q, want the new note %q in it", all, note)
	}

	// 0.25 µm pixels; density 1e11 /m² and coverage 60 % give a partly
	// grown film that the measurement can segment.
	if _, err := demolab.WriteMicrograph(micrograph, 0.25e-6, 1e11, 0.6); err != nil {
		b.t.Fatal(err)
	}
	outcomes := b.count("#outcomes tbody tr")
	b.do("upload a micrograph",
		chromedp.SetUploadFiles("#micrograph", []string{micrograph}),
		chromedp.SendKeys("#pixel", "0.25um"),
		chromedp.SetValue("#polarity", "darker"),
		chromedp.SendKeys("#micrograph-operator", "operator B"),
		chromedp.Click("#upload"),
		chromedp.WaitVisible(fmt.Sprintf("#outcomes tbody tr:nth-child(%d)", outcomes+1)))
	got := eval[string](b, "read the outcomes", `document.querySelector("#outcomes tbody").textContent`)
	if !strings.Contains(got, "uploaded in the browser") {
		b.t.Errorf("#outcomes reads %q, want the outcomes uploaded in the browser", got)
	}
	b.shot("run")
}

// checklist opens the run's checklist, screenshots it in print media and
// checks its PDF is one page.
func (b *browser) checklist(code string) {
	b.t.Helper()
	b.do("open the checklist", chromedp.Navigate(b.base+"/runs/"+code), chromedp.Click("#checklist"),
		chromedp.WaitVisible("pre#checklist"))
	b.shot("checklist")
	b.do("print media", chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
		_, err := cdp.Call(ctx, t, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"})
		return err
	}))
	b.shot("checklist-print")
	ctx, cancel := b.step()
	defer cancel()
	pdf, err := chromedp.Run(ctx, func(ctx context.Context, t *chromedp.Target) (page.PrintToPDFResult, error) {
		return cdp.Call(ctx, t, page.PrintToPDF, page.PrintToPDFParams{})
	})
	if err != nil {
		b.t.Fatalf("print the checklist: %v", err)
	}
	if n := pdfPages(pdf.Data); n != 1 {
		b.t.Errorf("the printed checklist has %d pages, want 1", n)
	}
	if err := os.WriteFile(filepath.Join(b.shots, "checklist.pdf"), pdf.Data, 0o644); err != nil {
		b.t.Fatal(err)
	}
	b.do("screen media", chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
		_, err := cdp.Call(ctx, t, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{})
		return err
	}))
}

// pdfPages counts the page objects of a PDF: "/Type /Page" not followed
// by "s" (which would be the /Pages tree node).
func pdfPages(data []byte) int {
	n := 0
	for _, marker := range [][]byte{[]byte("/Type /Page"), []byte("/Type/Page")} {
		rest := data
		for {
			i := bytes.Index(rest, marker)
			if i < 0 {
				break
			}
			rest = rest[i+len(marker):]
			if len(rest) == 0 || rest[0] != 's' {
				n++
			}
		}
	}
	return n
}

// analysisPage opens one analysis page and screenshots it; a page this
// build does not serve is logged and left out.
func (b *browser) analysisPage(path string) {
	b.t.Helper()
	resp, err := http.Get(b.base + path)
	if err != nil {
		b.t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusOK {
		b.t.Errorf("GET %s: status %d, want 200", path, resp.StatusCode)
	}
	b.do("open "+path, chromedp.Navigate(b.base+path), chromedp.WaitVisible("h1"))
	b.shot(strings.TrimPrefix(path, "/"))
}
