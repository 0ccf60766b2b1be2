package gas

import "fmt"

// Compilation names a published compilation of flammability data. The
// compilations disagree (for example CH4's LFL is 5.0 % in NFPA 497 and 4.4 %
// in IEC 60079-20-1), so a report must say which one it used.
type Compilation int

const (
	// NFPA497 is NFPA 497 (2008), the default compilation.
	NFPA497 Compilation = iota
	// IEC60079 is IEC 60079-20-1 (2010).
	IEC60079

	compilationCount = iota
)

// DefaultCompilation is the compilation behind Gas.LFL, Gas.UFL and
// Gas.AutoIgnition.
const DefaultCompilation = NFPA497

// String returns the compilation's citation, e.g. "NFPA 497 (2008)".
func (c Compilation) String() string {
	switch c {
	case NFPA497:
		return "NFPA 497 (2008)"
	case IEC60079:
		return "IEC 60079-20-1 (2010)"
	}
	return fmt.Sprintf("Compilation(%d)", int(c))
}

// Compilations returns every known compilation, default first.
func Compilations() []Compilation {
	return []Compilation{NFPA497, IEC60079}
}

// FlammabilityLimits are a gas's flammable limits in air (volume fractions,
// about 20 °C and 1 atm) and its autoignition temperature (K) from one
// compilation. All three are zero for a gas that is not flammable.
type FlammabilityLimits struct {
	LFL, UFL, AutoIgnition Value
}

// Limits returns the lower and upper flammable limits (volume fractions in air)
// and the autoignition temperature (K) of g from compilation c. For a gas the
// compilation does not list, or one that is not flammable, all three are zero
// with an empty source. It panics for an unknown Compilation value.
func (g Gas) Limits(c Compilation) (lfl, ufl, ait Value) {
	if c < 0 || c >= compilationCount {
		panic(fmt.Sprintf("gas: unknown compilation %d", int(c)))
	}
	l := g.limits[c]
	return l.LFL, l.UFL, l.AutoIgnition
}
