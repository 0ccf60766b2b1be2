package kinetics

import "testing"

// One prediction of the low-pressure template from its plan (profile built
// inside). Target under 50 µs.
func BenchmarkPredictTemplate(b *testing.B) {
	plan := loadTemplate(b, "lowpressure")
	p := DefaultParams()
	for b.Loop() {
		if _, err := Predict(plan, p, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// The same with the profile computed once.
func BenchmarkPredictProfile(b *testing.B) {
	prof := NewProfile(loadTemplate(b, "lowpressure"))
	p := DefaultParams()
	for b.Loop() {
		if _, err := PredictProfile(prof, p, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// A ramp with methane (the scipy reference ramp, 1 s sub-steps).
func BenchmarkPredictRamp(b *testing.B) {
	prof, p := rampProfile()
	for b.Loop() {
		if _, err := PredictProfile(prof, p, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// A 100×100 window over grow temperature and CH4 flow of the low-pressure
// template: per point the grow step and the steps after it re-derived,
// checked and predicted. The whole command's target (issue 18) is under
// 0.1 s on 2 cores; BenchmarkWindowCommand in cmd/foilrun measures it
// in-process.
func BenchmarkWindow100x100(b *testing.B) {
	plan := loadTemplate(b, "lowpressure")
	spec := WindowSpec{X: mustAxis(b, "temperature=950C:1050C:100"), Y: mustAxis(b, "CH4=1sccm:35sccm:100"), Params: DefaultParams()}
	for b.Loop() {
		if _, err := Window(plan, spec); err != nil {
			b.Fatal(err)
		}
	}
}
