package survey

import (
	"fmt"
	"math"
	"sort"
	"time"

	"github.com/scangate/scangate/schema"
)

// MinGrowthPeriods is the fewest consecutive periods growth_per_year is fitted from. The
// newest period may still be filling and the oldest may start part-way, so both are
// left out of the fit; the four or more between them give a slope with a residual. They
// must also span MinGrowthDays: a yearly rate read off a few weeks would mostly be noise
// (months of 28 to 31 days alone move rows per day by 10%).
const (
	MinGrowthPeriods = 6
	MinGrowthDays    = 365
)

// Partition turns rows per partition key into the table's partitions. Without a grain the
// keys are listed by name; with one each key is read as a time (see parseKey), folded
// into its period of grain, and the periods become a time scheme when they are
// consecutive (one tier of that grain keeping them all) or listed periods when some are
// missing. A single key without a grain is no partitioning at all.
func Partition(rows map[string]int64, key, grain string) (schema.SurveyPartitions, *float64, error) {
	if grain != "" && key == "" {
		return schema.SurveyPartitions{}, nil, fmt.Errorf("--grain %s needs a partition key: --partition-by COLUMN, or data in key=value folders", grain)
	}
	if len(rows) == 0 || key == "" {
		return schema.SurveyPartitions{Scheme: "none"}, nil, nil
	}
	if grain == "" {
		out := schema.SurveyPartitions{Scheme: "list", Key: key}
		for _, k := range sortedKeys(rows) {
			out.Items = append(out.Items, schema.SurveyItem{Name: listName(k), Rows: rows[k]})
		}
		if len(out.Items) == 1 {
			return schema.SurveyPartitions{Scheme: "none", Key: key}, nil, nil
		}
		return out, nil, nil
	}
	if grainIndex(grain) < 0 {
		return schema.SurveyPartitions{}, nil, fmt.Errorf("grain %q: use one of day, week, month, quarter, year", grain)
	}
	type acc struct {
		p    period
		rows int64
	}
	byIndex := map[int64]*acc{}
	for _, k := range sortedKeys(rows) {
		t, err := keyTime(k, grain)
		if err != nil {
			return schema.SurveyPartitions{}, nil, fmt.Errorf("%s: %v", key, err)
		}
		p := periodOf(t, grain)
		a := byIndex[p.index]
		if a == nil {
			a = &acc{p: p}
			byIndex[p.index] = a
		}
		a.rows += rows[k]
	}
	idx := make([]int64, 0, len(byIndex))
	for i := range byIndex {
		idx = append(idx, i)
	}
	sort.Slice(idx, func(a, b int) bool { return idx[a] < idx[b] })
	out := schema.SurveyPartitions{Scheme: "list", Key: key, Grain: grain}
	ps := make([]acc, len(idx))
	for i, ix := range idx {
		ps[i] = *byIndex[ix]
		out.Items = append(out.Items, schema.SurveyItem{Name: ps[i].p.label(grain), Rows: ps[i].rows})
	}
	if idx[len(idx)-1]-idx[0]+1 != int64(len(idx)) {
		return out, nil, nil // periods are missing: a list of periods
	}
	out.Scheme = "time"
	if len(ps) < MinGrowthPeriods || ps[len(ps)-1].p.start.Sub(ps[1].p.start).Hours()/24 < MinGrowthDays {
		return out, nil, nil
	}
	xs := make([]float64, 0, len(ps)-2)
	ys := make([]float64, 0, len(ps)-2)
	for _, a := range ps[1 : len(ps)-1] {
		days := a.p.end.Sub(a.p.start).Hours() / 24
		mid := float64(a.p.start.Unix())/86400 + days/2
		xs = append(xs, mid/365.25)
		ys = append(ys, math.Log(float64(a.rows)/days))
	}
	g := GrowthFit(xs, ys)
	return out, &g, nil
}

// keyTime reads a partition key as a time that folds into periods of grain.
func keyTime(k, grain string) (time.Time, error) {
	t, prec, ok := parseKey(k)
	if !ok {
		return t, fmt.Errorf("partition key %q is not a date or period (YYYY-MM-DD, YYYY-Www, YYYY-MM, YYYY-Qn, YYYY); drop --grain to list the partitions by name", k)
	}
	if !foldable(prec, grain) {
		return t, fmt.Errorf("partition key %q does not fold into %s periods; give --grain %s or coarser", k, grain, Grains[prec])
	}
	return t, nil
}

// foldKey is the label of the period of grain that key falls in.
func foldKey(k, grain string) (string, error) {
	t, err := keyTime(k, grain)
	if err != nil {
		return "", err
	}
	return periodOf(t, grain).label(grain), nil
}

// GrowthFit is the growth per year whose logarithm is the least-squares slope of ys
// (log rows per day) on xs (period midpoints in years): exp(slope) - 1, rounded to four
// places and held to the manifest's range [-0.99, 100].
func GrowthFit(xs, ys []float64) float64 {
	n := float64(len(xs))
	var mx, my float64
	for i := range xs {
		mx += xs[i]
		my += ys[i]
	}
	mx, my = mx/n, my/n
	var sxy, sxx float64
	for i := range xs {
		dx := xs[i] - mx
		sxy += float64(dx * (ys[i] - my))
		sxx += float64(dx * dx)
	}
	g := 0.0
	if sxx > 0 {
		g = math.Exp(sxy/sxx) - 1
	}
	return math.Min(100, math.Max(-0.99, roundTo(g, 4)))
}

// listName is a partition's name in the manifest; an empty key value is written as
// "(empty)" since the manifest refuses empty names.
func listName(k string) string {
	if k == "" {
		return "(empty)"
	}
	return k
}

func sortedKeys(m map[string]int64) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
