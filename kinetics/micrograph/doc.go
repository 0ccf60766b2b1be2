// Package micrograph measures graphene domains on copper from a
// micrograph: coverage, domain count, domain density and the size
// distribution, with an overlay image that shows what was measured.
//
// Units: lengths in metres (the caller gives the pixel size), areas in m²,
// densities per m² (Result.DensityPerMM2 for per mm²). Gray levels are
// reported in the image's own units (0–255 for 8-bit, 0–65535 for 16-bit
// images).
//
// Entry points: Load or Decode read a PNG, JPEG or TIFF image, refusing an
// oversized one from its header before any pixel memory is allocated;
// Analyze measures it with Settings; Result.WriteOverlay draws the
// outlines. Otsu and Quantile are exported for reuse and for checking.
//
// # Method
//
//  0. Field: the crop (Settings.Crop) or the whole image, less an
//     instrument's info bar found along its top or bottom (FindInfoBars;
//     Settings.KeepInfoBar turns the search off). Result.Region is what
//     was measured and Result.Cuts says what was cut.
//  1. Luma: colour images are reduced to ITU-R BT.601 luma,
//     Y = 0.299·R + 0.587·G + 0.114·B (the standard library's weights),
//     held as 16-bit levels.
//  2. Flattening: a polynomial surface Q of total degree D (default 2) is
//     fitted jointly with a two-class step to the log levels,
//     ln(1+I) ≈ Q(u, v) + c·m, and every pixel is multiplied by
//     exp(Q̄ − Q). Illumination multiplies reflectance, so it adds in the
//     log; the step keeps dense domains from biasing the surface.
//  3. Smoothing: binomial kernel C(2r, j)/2^(2r) along rows and columns
//     (default r = 2, taps 1 4 6 4 1, σ = 1 px).
//  4. Threshold: Otsu's method on the 16-bit histogram, with the lower
//     class ≤ t (the convention of scikit-image's threshold_otsu; the
//     tests check equality on committed images). Polarity is given, or
//     chosen automatically: from a bare reference when there is one, else
//     the smaller class is taken as the domains, and Result says so.
//  5. One peak: the histogram is regrouped into 128 bins between its
//     0.1 % and 99.9 % quantiles and smoothed (σ = 2 bins). When the
//     lowest point between the highest bin on each side of t is not below
//     MaxValleyRatio (default 0.5) of the lower of the two, the image is
//     one-peaked (all copper or all graphene) and Analyze returns a
//     *OnePeakError, unless a bare gray level or bare rectangle decides:
//     median within max(3 robust σ, 1 % of full scale) of the bare level
//     means all bare (coverage 0), otherwise all covered (coverage 1).
//  6. Domains: 8-connected components of the domain class, labelled on
//     horizontal runs with a union-find forest; components under
//     MinAreaPixels (default 16) are dropped as specks.
//  7. Measures: coverage = domain pixels / all pixels; interior and
//     edge-touching domains counted apart; density by the counting-frame
//     rule (domains touching the right or bottom border are not counted),
//     N_A = counted / (W·H·a²) for pixel size a; sizes from interior domains
//     only, as area-equivalent diameters d = 2·√(A/π) with mean, standard
//     deviation, 10th, 50th and 90th percentiles (linear interpolation).
//
// Memory: besides the decoded image, Analyze holds one 16-bit plane
// (2 bytes per pixel), the runs of the domain class (12 bytes per run plus
// 8 for labelling) and small per-band buffers. Work is split across
// GOMAXPROCS goroutines in bands of rows.
//
// References:
//
//	N. Otsu, "A threshold selection method from gray-level histograms",
//	IEEE Trans. Systems, Man, and Cybernetics 9 (1), 62–66, 1979.
//	H. J. G. Gundersen, "Notes on the estimation of the numerical density
//	of arbitrary profiles: the edge effect", J. Microscopy 111, 219–223,
//	1977 (counting frame; from memory).
//	R. J. Hyndman, Y. Fan, "Sample quantiles in statistical packages",
//	The American Statistician 50 (4), 361–365, 1996.
//	ITU-R Recommendation BT.601, luma weights (common practice).
package micrograph
