package recipe

import (
	"strings"
	"testing"
)

const imagingSite = `name: test room
exhaust_to: house exhaust duct
gas_code: the site's gas-safety rules, revision 1
room:
  volume: 60 m3
  air_changes: 6 /h
imaging:
`

// TestImagingPresets: a site's presets load with the pixel size in metres,
// and bad ones are refused with the field, the bad value and a hint.
func TestImagingPresets(t *testing.T) {
	s, err := ParseSite("site.yaml", []byte(imagingSite+"  - {name: sem-1, polarity: darker, pixel: 0.2um, bare_gray: 168}\n  - {name: optical, polarity: brighter}\n"))
	if err != nil {
		t.Fatal(err)
	}
	p := s.Instrument("sem-1")
	// 0.2 µm = 0.2e-6 m (SI prefix); 1e-12 relative, float rounding.
	if p == nil || p.Polarity != "darker" || !near(p.Pixel.SI, 0.2e-6, 1e-12) || p.BareGray == nil || *p.BareGray != 168 {
		t.Fatalf("sem-1: got %+v, want darker, 0.2e-6 m, bare gray 168", p)
	}
	if s.Instrument("optical") == nil || s.Instrument("tem") != nil {
		t.Errorf("Instrument: optical %v, tem %v; want found and nil", s.Instrument("optical"), s.Instrument("tem"))
	}
	bad := []struct {
		name, yaml, want string
	}{
		{"bad polarity", "  - {name: sem-1, polarity: auto}\n", `line 8 col 5: imaging preset "sem-1": polarity "auto", want darker or brighter`},
		{"zero pixel", "  - {name: sem-1, polarity: darker, pixel: 0 um}\n", `pixel "0 um" must be greater than zero`},
		{"pixel as a pressure", "  - {name: sem-1, polarity: darker, pixel: 5 Torr}\n", `is a pressure`},
		{"negative bare gray", "  - {name: sem-1, polarity: darker, bare_gray: -3}\n", `bare_gray -3, want 0 or more`},
		{"named twice", "  - {name: sem-1, polarity: darker}\n  - {name: sem-1, polarity: darker}\n", `imaging preset "sem-1" is named twice`},
		{"no name", "  - {polarity: darker}\n", `name`},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			_, err := ParseSite("site.yaml", []byte(imagingSite+c.yaml))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want an error with %q", err, c.want)
			}
		})
	}
}

func near(got, want, rel float64) bool {
	d := got - want
	return d <= rel*want && -d <= rel*want
}
