package main

import (
	"errors"
	"fmt"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/imageoutcome"
	"image"
	"io"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics/film"
	"github.com/foilrun/foilrun/kinetics/micrograph"
	"github.com/foilrun/foilrun/recipe/infile"
)

// measurement is one measured outcome (imageoutcome.Measurement), from a
// micrograph or entered film values.
type measurement = imageoutcome.Measurement

// measureFlags are the measurement inputs shared by `measure` and
// `outcome measure`.
type measureFlags struct {
	images        []string
	pixels        []string
	polarity      string
	bareGray      float64
	bareGraySet   bool
	bareRegion    string
	crop          string
	keepBar       bool
	instrument    string
	site          string
	islandLimit   string
	minArea       int
	overlay       string
	force         bool
	transmittance string
	substrate     string
	raman         string
}

func (mf *measureFlags) registerImage(cmd *cobra.Command) {
	cmd.Flags().StringArrayVar(&mf.pixels, "pixel", nil, "pixel size on the sample, e.g. 0.25um (required with an image unless --instrument gives it)")
	cmd.Flags().StringVar(&mf.polarity, "polarity", "auto", "domains are darker, brighter, or auto")
	cmd.Flags().Float64Var(&mf.bareGray, "bare-gray", 0, "gray level of bare copper in the image's own units (resolves one-peaked images)")
	cmd.Flags().StringVar(&mf.bareRegion, "bare-region", "", "rectangle x0,y0,x1,y1 (pixels) known to be bare copper")
	cmd.Flags().StringVar(&mf.crop, "crop", "", "measure only the rectangle x0,y0,x1,y1 (pixels, x1 and y1 exclusive)")
	cmd.Flags().BoolVar(&mf.keepBar, "keep-info-bar", false, "do not look for and cut an instrument's info bar at the top or bottom")
	cmd.Flags().StringVar(&mf.instrument, "instrument", "", "imaging preset of the site file (polarity, pixel size, bare gray)")
	cmd.Flags().StringVar(&mf.site, "site", "", "site file holding the imaging presets")
	cmd.Flags().StringVar(&mf.islandLimit, "island-limit", fmt.Sprintf("%g%%", 100*imageoutcome.DefaultIslandLimit), "below this coverage islands are taken as nuclei (islands rarely merge there)")
	cmd.Flags().IntVar(&mf.minArea, "min-area", 0, "drop specks smaller than this many pixels (default 16)")
	cmd.Flags().StringVar(&mf.overlay, "overlay", "", "write the image with detected domains outlined to this PNG")
	addForceFlag(cmd, &mf.force)
}

// Pixel sizes accepted by --pixel: from an electron micrograph's 0.1 nm
// to a flatbed scan's 1 mm.
const (
	minPixel = 1e-10 // m
	maxPixel = 1e-3  // m
)

func (mf *measureFlags) registerFilm(cmd *cobra.Command) {
	cmd.Flags().StringVar(&mf.transmittance, "transmittance", "", "transmittance at 550 nm, e.g. 97.6%")
	cmd.Flags().StringVar(&mf.substrate, "substrate", "", "bare-substrate transmittance reference, e.g. 91.8%")
	cmd.Flags().StringVar(&mf.raman, "raman", "", "Raman ratios, e.g. 2d/g=2.3,d/g=0.05[,fwhm=30]")
}

// imageResult is the JSON form of an image measurement.
type imageResult struct {
	File           string   `json:"file"`
	SHA256         string   `json:"sha256"`
	Format         string   `json:"format"`
	Width          int      `json:"width"`
	Height         int      `json:"height"`
	Region         [4]int   `json:"region"` // x0, y0, x1, y1 of the measured field
	Cuts           []string `json:"cuts,omitempty"`
	PixelUm        float64  `json:"pixel_um"`
	Instrument     string   `json:"instrument,omitempty"`
	Coverage       float64  `json:"coverage"`
	Phase          string   `json:"phase,omitempty"` // "continuous film" or "bare copper" for a one-peaked field
	Domains        int      `json:"domains"`
	Interior       int      `json:"interior"`
	Edge           int      `json:"edge_touching"`
	Specks         int      `json:"specks_removed"`
	IslandPerMM2   float64  `json:"island_density"` // separate islands per mm²
	MeanUm         float64  `json:"mean_diameter_um"`
	MedianUm       float64  `json:"median_diameter_um"`
	P10Um          float64  `json:"p10_diameter_um"`
	P90Um          float64  `json:"p90_diameter_um"`
	Threshold      float64  `json:"threshold"`
	Polarity       string   `json:"polarity"`
	PolaritySource string   `json:"polarity_source"`
	Reason         string   `json:"polarity_reason"`
	Overlay        string   `json:"overlay,omitempty"`
	Notes          []string `json:"notes,omitempty"`
}

// measureImage analyses one micrograph with the resolved image settings
// and returns the printed result and the outcomes it yields; the overlay
// goes through f's guard, with the image as an input.
func (mf *measureFlags) measureImage(f *factory, path string, is *imageSettings) (*imageResult, []measurement, error) {
	guard := f.guard(mf.force, outfile.Input{What: "micrograph", Path: path})
	if err := checkOutput(mf.overlay, guard); err != nil {
		return nil, nil, err
	}
	img, info, sum, err := decodeImage(path)
	if err != nil {
		return nil, nil, err
	}
	set := is.set
	if err := mf.checkRects(set, img.Bounds()); err != nil {
		return nil, nil, err
	}
	if is.refuseGuess && is.source == sourceGuess {
		msg := fmt.Sprintf("image %q: the polarity of the domains is not known, and a guess is not stored as a measurement", path)
		if is.undecided != "" {
			msg += "; the run's " + is.undecided
		}
		return nil, nil, withHint(usagef("%s", msg),
			"give --polarity darker|brighter, or --instrument NAME --site FILE (an imaging preset); foilrun measure image shows the guess without storing it")
	}
	res, err := analyze(img, set, is.predicted)
	if err != nil {
		var op *micrograph.OnePeakError
		if errors.As(err, &op) {
			return nil, nil, withHint(inputError(fmt.Errorf("image %q: %w", path, err)), "give --bare-gray LEVEL, --bare-region x0,y0,x1,y1 of a known bare area, or an --instrument whose preset has bare_gray")
		}
		return nil, nil, inputError(fmt.Errorf("image %q: %w", path, err))
	}
	out := newImageResult(path, sum, info, res, is)
	if mf.overlay != "" {
		if err := writeOutput(mf.overlay, guard, func(w io.Writer) error { return res.WriteOverlay(w, img) }); err != nil {
			return nil, nil, err
		}
		out.Overlay = mf.overlay
		fmt.Fprintf(f.io.Err, "wrote overlay %s\n", mf.overlay)
	}
	return out, is.measurements(res, out), nil
}

// analyze runs micrograph.Analyze; with a predicted side it takes the
// class the prediction names (the smaller or the larger one) as the
// domains and gives the prediction as the polarity's reason.
func analyze(img image.Image, set micrograph.Settings, side *predictedSide) (*micrograph.Result, error) {
	res, err := micrograph.Analyze(img, set)
	if err != nil || side == nil {
		return res, err
	}
	set.Polarity = res.Polarity // the smaller class
	if side.majority {
		set.Polarity = micrograph.DomainsDarker
		if res.Polarity == micrograph.DomainsDarker {
			set.Polarity = micrograph.DomainsBrighter
		}
	}
	if res, err = micrograph.Analyze(img, set); err != nil {
		return nil, err
	}
	res.PolarityReason = "the run's " + side.reason
	return res, nil
}

// checkRects refuses a --crop or --bare-region outside the image, with the
// image's size in the message and the allowed range in the hint.
func (mf *measureFlags) checkRects(set micrograph.Settings, b image.Rectangle) error {
	hint := fmt.Sprintf("give x0,y0,x1,y1 with 0 ≤ x0 < x1 ≤ %d and 0 ≤ y0 < y1 ≤ %d", b.Dx(), b.Dy())
	if r := set.Crop; !r.Empty() && !r.In(b) {
		return withHint(usagef("--crop %q lies outside the image, which is %d×%d pixels", mf.crop, b.Dx(), b.Dy()), hint)
	}
	if r := set.BareRegion; !r.Empty() && !r.In(b) {
		return withHint(usagef("--bare-region %q lies outside the image, which is %d×%d pixels", mf.bareRegion, b.Dx(), b.Dy()), hint)
	}
	return nil
}

func newImageResult(path, sum string, info micrograph.Info, res *micrograph.Result, is *imageSettings) *imageResult {
	r := res.Region
	out := &imageResult{
		File: path, SHA256: sum, Format: info.Format, Width: info.Width, Height: info.Height,
		Region: [4]int{r.Min.X, r.Min.Y, r.Max.X, r.Max.Y}, Cuts: res.Cuts, PixelUm: inUnit(res.PixelSize, "um"), Instrument: is.instrument,
		Coverage: res.Coverage, Phase: imageoutcome.PhaseName(res.Phase), Domains: res.Count, Interior: res.Interior, Edge: res.Edge, Specks: res.Specks,
		IslandPerMM2: res.DensityPerMM2(), MeanUm: inUnit(res.Sizes.Mean, "um"), MedianUm: inUnit(res.Sizes.Median, "um"),
		P10Um: inUnit(res.Sizes.P10, "um"), P90Um: inUnit(res.Sizes.P90, "um"), Threshold: res.Threshold,
		Polarity: res.Polarity.String(), PolaritySource: is.source, Reason: res.PolarityReason, Notes: res.Notes,
	}
	return out
}

// decodeImage reads and decodes a micrograph through the bounded reader
// (a regular file of at most 1 GiB; the decoder refuses more than
// micrograph.DefaultMaxPixels) and returns the SHA-256 of its bytes.
func decodeImage(path string) (image.Image, micrograph.Info, string, error) {
	fh, err := infile.Open(path, infile.Image)
	if err != nil {
		return nil, micrograph.Info{}, "", fmt.Errorf("image: %w", err)
	}
	defer fh.Close()
	img, info, err := micrograph.Decode(fh, micrograph.Limits{MaxBytes: infile.Image.Max})
	if err != nil {
		return nil, info, "", inputError(fmt.Errorf("image %q: %w", path, err))
	}
	sum, err := fh.SHA256()
	if err != nil {
		return nil, info, "", fmt.Errorf("image %q: %w", path, err)
	}
	return img, info, sum, nil
}

// measureFilm turns --transmittance and --raman into outcomes.
func (mf *measureFlags) measureFilm() ([]measurement, []string, error) {
	var ms []measurement
	var lines []string
	if mf.transmittance != "" {
		t, err := film.ParseTransmittance(mf.transmittance)
		if err != nil {
			return nil, nil, usagef("--transmittance: %v", err)
		}
		sub := 0.0
		if mf.substrate != "" {
			if sub, err = film.ParseTransmittance(mf.substrate); err != nil {
				return nil, nil, usagef("--substrate: %v", err)
			}
		}
		e, err := film.Layers(t, sub)
		if err != nil {
			return nil, nil, inputError(err)
		}
		method := "transmittance at 550 nm, T = (1 + N·πα/2)^-2"
		if sub > 0 {
			method += ", relative to the bare substrate"
		}
		ms = append(ms,
			measurement{Metric: "transmittance_550", Value: t, Unit: "1", Method: "entered", Text: fixed(t*100, 2) + " %"},
			measurement{Metric: "layers", Value: e.Layers, Unit: "1", Method: method, Text: fmt.Sprintf("%.2f (nearest %d)", e.Layers, e.Nearest)})
		lines = append(lines, fmt.Sprintf("layers from transmittance: %.2f, nearest whole number %d (film transmittance %.2f %%)", e.Layers, e.Nearest, e.Film*100))
	}
	if mf.raman != "" {
		r, err := film.ParseRaman(mf.raman)
		if err != nil {
			return nil, nil, usagef("--raman: %v", err)
		}
		c, err := film.ClassifyRaman(r)
		if err != nil {
			return nil, nil, inputError(err)
		}
		ms = append(ms,
			measurement{Metric: "raman_2d_g", Value: r.TwoDG, Unit: "1", Method: "Raman, entered", Text: num(r.TwoDG, 3)},
			measurement{Metric: "raman_d_g", Value: r.DG, Unit: "1", Method: "Raman, entered", Text: num(r.DG, 3)})
		if r.Width2D > 0 {
			ms = append(ms, measurement{Metric: "raman_2d_fwhm", Value: r.Width2D, Unit: "1/cm", Method: "Raman, entered", Text: num(r.Width2D, 3) + " cm-1"})
		}
		th := c.Thresholds
		lines = append(lines, fmt.Sprintf("Raman: %s — %s", c.Class, c.Reason),
			fmt.Sprintf("  thresholds (common practice): monolayer-like at 2D/G ≥ %g with 2D FWHM ≤ %g cm⁻¹; defective at D/G ≥ %g", th.MonolayerMin2DG, th.MonolayerMax2DWidth, th.DefectiveMinDG))
		for _, n := range c.Notes {
			lines = append(lines, "  note: "+n)
		}
	}
	return ms, lines, nil
}

func parseRect(s string) (image.Rectangle, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 4 {
		return image.Rectangle{}, fmt.Errorf("%q: want x0,y0,x1,y1", s)
	}
	var v [4]int
	for i, p := range parts {
		n, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || n < 0 {
			return image.Rectangle{}, fmt.Errorf("%q: %q is not a pixel coordinate", s, p)
		}
		v[i] = n
	}
	r := image.Rect(v[0], v[1], v[2], v[3])
	if r.Empty() {
		return image.Rectangle{}, fmt.Errorf("%q is an empty rectangle", s)
	}
	return r, nil
}

type measureOptions struct {
	f      *factory
	flags  measureFlags
	output outputFormat
}

func newMeasureCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "measure",
		Short: "Measure graphene from a micrograph, a transmittance or Raman ratios, without a run",
	}
	cmd.AddCommand(newMeasureImageCmd(f), newMeasureFilmCmd(f))
	return cmd
}

func newMeasureImageCmd(f *factory) *cobra.Command {
	opts := &measureOptions{f: f}
	cmd := &cobra.Command{
		Use:   "image FILE",
		Short: "Coverage, domain count, density and sizes from a micrograph (PNG, JPEG, TIFF)",
		Long: `Measure coverage, domain count, density and sizes from a micrograph: a PNG,
JPEG or TIFF regular file of at most 1 GiB and 256 Mpixel.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.flags.images = args[:1]
			opts.flags.bareGraySet = cmd.Flags().Changed("bare-gray")
			return measureImageRun(opts)
		},
	}
	opts.flags.registerImage(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func measureImageRun(opts *measureOptions) error {
	mf := &opts.flags
	is, err := mf.imageSettings(1)
	if err != nil {
		return err
	}
	res, ms, err := mf.measureImage(opts.f, mf.images[0], is[0])
	if err != nil {
		return err
	}
	if res.PolaritySource == sourceGuess {
		fmt.Fprintf(opts.f.io.Err, "foilrun: warning: %s: the polarity is a guess (%s); above one half coverage it reads the bare copper as the film\n  hint: give --polarity darker|brighter or --instrument NAME --site FILE\n", res.File, res.Reason)
	}
	w := opts.f.io.Out
	if opts.output == formatJSON {
		return writeJSON(w, res)
	}
	if opts.output == formatTable {
		fmt.Fprintf(w, "%s: %s %d×%d, threshold %.0f, domains %s (%s; polarity_source %s)\n", res.File, res.Format, res.Width, res.Height, res.Threshold, res.Polarity, res.Reason, res.PolaritySource)
		for _, c := range res.Cuts {
			fmt.Fprintln(w, "cut: "+c)
		}
	}
	t := imageTable(res, ms)
	if err := render(w, opts.output, t, nil); err != nil {
		return err
	}
	if opts.output == formatTable {
		for _, n := range res.Notes {
			fmt.Fprintln(w, "note: "+n)
		}
	}
	return nil
}

func imageTable(res *imageResult, ms []measurement) table {
	t := table{Header: []string{"quantity", "value"}, Numeric: []bool{false, true}}
	t.add("coverage", fixed(res.Coverage*100, 2)+" %")
	t.add("domains (interior + edge-touching)", fmt.Sprintf("%d (%d + %d)", res.Domains, res.Interior, res.Edge))
	t.add("specks removed", strconv.Itoa(res.Specks))
	if res.Phase != "" {
		t.add("method", res.Phase)
	}
	t.add("island density", num(res.IslandPerMM2, 4)+" /mm²")
	t.add("diameter mean / median", num(res.MeanUm, 4)+" / "+num(res.MedianUm, 4)+" um")
	t.add("diameter p10 – p90", num(res.P10Um, 4)+" – "+num(res.P90Um, 4)+" um")
	return t
}

func newMeasureFilmCmd(f *factory) *cobra.Command {
	opts := &measureOptions{f: f}
	cmd := &cobra.Command{
		Use:   "film",
		Short: "Layer count from transmittance at 550 nm and a Raman classification",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.flags.transmittance == "" && opts.flags.raman == "" {
				return usagef("give --transmittance and/or --raman")
			}
			return measureFilmRun(opts)
		},
	}
	opts.flags.registerFilm(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

func measureFilmRun(opts *measureOptions) error {
	ms, lines, err := opts.flags.measureFilm()
	if err != nil {
		return err
	}
	return printMeasurements(opts.f.io.Out, opts.output, ms, lines)
}

func printMeasurements(w io.Writer, format outputFormat, ms []measurement, lines []string) error {
	t := table{Header: []string{"metric", "value", "unit", "method"}, Numeric: []bool{false, true}}
	for _, m := range ms {
		t.add(m.Metric, num(m.Value, 5), m.Unit, m.Method)
	}
	if err := render(w, format, t, ms); err != nil {
		return err
	}
	if format == formatTable {
		for _, l := range lines {
			fmt.Fprintln(w, l)
		}
	}
	return nil
}
