package lab

import (
	"context"
	"fmt"

	"github.com/foilrun/foilrun/store"
)

// maxSampleParams is how many parameter columns one Samples query takes.
const maxSampleParams = 60

// TwinSamples returns the metric and params of the runs that pass the
// filter, each parameter on conditions src (see Pick): the planned value,
// or with logged conditions its logged twin where the run has one. Long
// parameter lists are queried in parts, joined run by run. It feeds
// store.Best and store.Rank for `runs best`, `runs rank` and serve's
// /best and /rank.
func TwinSamples(ctx context.Context, l store.RunLog, f store.Filter, metric string, params []string, src Source) (Picked, error) {
	cols := Twins(params, src)
	var all []store.Sample
	for lo := 0; lo < len(cols) || lo == 0; lo += maxSampleParams {
		part := cols[lo:min(len(cols), lo+maxSampleParams)]
		s, err := l.Samples(ctx, f, metric, part)
		if err != nil {
			return Picked{}, err
		}
		if lo == 0 {
			all = s
			continue
		}
		if len(s) != len(all) {
			return Picked{}, fmt.Errorf("samples of %s: the log changed while it was read; run the query again", metric)
		}
		for i := range all {
			all[i].Params = append(all[i].Params, s[i].Params...)
		}
	}
	return Pick(all, params, src), nil
}
