package metrics

import (
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"testing"
)

// TestSortedOrderIsStable compares the radix sort with the standard
// library's stable sort on data with many ties and both signs.
func TestSortedOrderIsStable(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{10, 5000, 100000} {
		p := make([]float64, n)
		for i := range p {
			switch r.IntN(3) {
			case 0:
				p[i] = float64(r.IntN(20)) / 20
			case 1:
				p[i] = r.Float64()
			default:
				p[i] = -r.ExpFloat64()
			}
		}
		got := SortedOrder(p)
		if serial := SortedOrderSerial(p); !slices.Equal(got, serial) {
			t.Fatalf("n=%d: the serial sort differs from the parallel one", n)
		}
		want := make([]int, n)
		for i := range want {
			want[i] = i
		}
		slices.SortStableFunc(want, func(a, b int) int {
			switch {
			case p[a] < p[b]:
				return -1
			case p[a] > p[b]:
				return 1
			}
			return 0
		})
		if !slices.Equal(got, want) {
			t.Fatalf("n=%d: radix order differs from the stable sort", n)
		}
	}
}

func TestHosmerLemeshowTiesStayTogether(t *testing.T) {
	p := []float64{0.1, 0.1, 0.1, 0.1, 0.1, 0.2, 0.2, 0.2, 0.2, 0.2}
	y := []float64{0, 0, 1, 0, 0, 1, 0, 0, 1, 0}
	// With 4 groups the starts 0, 2, 5, 7 move to 0, 5, 5, 10: the runs of
	// ties become the two groups, and the empty ones are dropped.
	got := HosmerLemeshow(SortByRisk(y, p), 4, false)
	if got.Groups != 2 || got.Table[0].N != 5 || got.Table[1].N != 5 {
		t.Fatalf("groups %+v", got.Table)
	}
	// Σ (O − E)² / (E (1 − E/n)): group 1 has O=1, E=0.5; group 2 O=2, E=1.
	want := 0.25/(0.5*0.9) + 1/(1*0.8)
	if math.Abs(got.Statistic-want) > 1e-12 || got.DF != 2 {
		t.Errorf("statistic %v df %d, want %v and 2", got.Statistic, got.DF, want)
	}
	if dev := HosmerLemeshow(SortByRisk(y, p), 4, true); !math.IsNaN(dev.P) || dev.DF != 0 {
		t.Errorf("with 2 groups on development data df is 0 and p undefined: %+v", dev)
	}
}

func TestHosmerLemeshowStableOrder(t *testing.T) {
	// Row order decides nothing but the order within a tie, so shuffling
	// rows with distinct risks leaves the result unchanged.
	p := []float64{0.3, 0.05, 0.6, 0.2, 0.9, 0.4, 0.15, 0.7, 0.5, 0.8, 0.25, 0.35}
	y := []float64{0, 0, 1, 0, 1, 1, 0, 1, 0, 1, 0, 0}
	a := HosmerLemeshow(SortByRisk(y, p), 3, false)
	rp, ry := make([]float64, len(p)), make([]float64, len(p))
	for i := range p {
		rp[len(p)-1-i], ry[len(p)-1-i] = p[i], y[i]
	}
	b := HosmerLemeshow(SortByRisk(ry, rp), 3, false)
	if math.Abs(a.Statistic-b.Statistic) > 1e-12 || a.Groups != b.Groups {
		t.Errorf("%v vs %v", a, b)
	}
}

func TestQuantileSelectMatchesSort(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for _, n := range []int{1, 2, 3, 10, 101, 5000} {
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(r.IntN(50)) // ties
		}
		s := slices.Clone(a)
		slices.Sort(s)
		for _, q := range []float64{0, 0.1, 0.5, 0.9, 1} {
			if got, want := quantileSelect(slices.Clone(a), q), Quantile7(s, q); got != want {
				t.Fatalf("n=%d q=%v: %v, want %v", n, q, got, want)
			}
		}
	}
}

func TestThresholdCountsSortedPath(t *testing.T) {
	r := rand.New(rand.NewPCG(31, 32))
	n := 3000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = float64(r.IntN(40)) / 40
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	ts := []float64{0.3, 0.05, 0.5, 0.5, 0.975}
	unsorted := thresholdCountsUnsorted(y, p, ts)
	order := SortedOrder(p)
	ps, ys := make([]float64, n), make([]float64, n)
	for k, i := range order {
		ps[k], ys[k] = p[i], y[i]
	}
	sorted := ThresholdCounts(AsSorted(ys, ps), ts)
	if !slices.Equal(unsorted, sorted) {
		t.Errorf("sorted path %v, unsorted %v", sorted, unsorted)
	}
}

// thresholdCountsUnsorted counts the 2×2 tables of unsorted rows in one
// pass (each row placed by binary search among the sorted thresholds):
// the algorithm ThresholdCounts used on unsorted rows before it took
// Sorted, kept as an independent check of the sorted path.
func thresholdCountsUnsorted(y, p []float64, ts []float64) []Counts {
	sorted := append([]float64(nil), ts...)
	sort.Float64s(sorted)
	// posAt[k] counts rows whose risk reaches sorted[k-1] but not
	// sorted[k]: a row with p ≥ sorted[j] for j < k.
	ev := make([]int, len(sorted)+1)
	ne := make([]int, len(sorted)+1)
	for i, v := range p {
		k := sort.Search(len(sorted), func(j int) bool { return sorted[j] > v })
		if y[i] == 1 {
			ev[k]++
		} else {
			ne[k]++
		}
	}
	// Rows in bucket k are treated at thresholds sorted[0..k-1].
	totalE, totalN := 0, 0
	for k := range ev {
		totalE += ev[k]
		totalN += ne[k]
	}
	bySorted := make([]Counts, len(sorted))
	tp, fp := totalE, totalN
	for j := range sorted {
		// Rows with p < sorted[j] are in buckets 0..j.
		tp -= ev[j]
		fp -= ne[j]
		bySorted[j] = Counts{Threshold: sorted[j], TP: tp, FP: fp, FN: totalE - tp, TN: totalN - fp}
	}
	out := make([]Counts, len(ts))
	for i, t := range ts {
		j := sort.SearchFloat64s(sorted, t)
		out[i] = bySorted[j]
	}
	return out
}

// TestHosmerLemeshowUndefinedGroup: a risk group whose risks are all 0
// or all 1 has no binomial variance, so the statistic and its p-value do
// not exist (before, an event in a group of risks 0 gave an infinite
// statistic and p = 0).
func TestHosmerLemeshowUndefinedGroup(t *testing.T) {
	y := []float64{1, 0, 0, 0, 0, 1, 0, 1, 1, 1}
	for _, c := range []struct {
		name string
		p    []float64
	}{
		{"an event among risks of 0", []float64{0, 0, 0, 0, 0, 0.6, 0.5, 0.7, 0.8, 0.9}},
		{"a non-event among risks of 1", []float64{0.1, 0.2, 0.3, 0.2, 0.1, 1, 1, 1, 1, 1}},
		{"risks of 0 and 1 only, all right", []float64{1, 0, 0, 0, 0, 1, 0, 1, 1, 1}},
	} {
		h := HosmerLemeshow(SortByRisk(y, c.p), 2, false)
		if !math.IsNaN(h.Statistic) || !math.IsNaN(h.P) || h.Groups != 2 {
			t.Errorf("%s: statistic %g, p %g, %d groups; want NaN, NaN, 2", c.name, h.Statistic, h.P, h.Groups)
		}
	}
}
