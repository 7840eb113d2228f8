package scenario

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
)

// Missing is a missing-data version of an extract and its multiply
// imputed completions, for the demo of an imputed audit. BMI and albumin
// go missing at random (MAR): more often in older patients and in those
// with the outcome, both of which are observed, on top of the extract's
// own missing values. The completed datasets come from a simple imputer
// of our own (Impute); riskaudit itself audits completed data and does
// not impute.
type Missing struct {
	Extract Extract
	// Share is the added share of missing BMI and albumin values (each
	// about this share, the same rows more likely for both).
	Share float64
	// M is the number of imputations and Seed fixes the missingness and
	// the imputations.
	M    int
	Seed uint64
}

// LaterMissing is the later extract with about 15% more BMI and albumin
// values missing at random, completed 10 times.
var LaterMissing = Missing{Extract: Later, Share: 0.15, M: 10, Seed: 20260202}

// ImputationColumn is the stacked file's imputation column.
const ImputationColumn = "imputation"

// table is a CSV extract as text fields.
type table struct {
	header []string
	rows   [][]string
}

func parseTable(csv []byte) table {
	lines := strings.Split(strings.TrimRight(string(csv), "\n"), "\n")
	t := table{header: strings.Split(lines[0], ",")}
	for _, l := range lines[1:] {
		t.rows = append(t.rows, strings.Split(l, ","))
	}
	return t
}

func (t table) col(name string) int {
	for i, h := range t.header {
		if h == name {
			return i
		}
	}
	panic("scenario: no column " + name)
}

// Incomplete returns the extract with the added missing values, as CSV
// (missing values written NA).
func (ms Missing) Incomplete() []byte {
	t, _ := ms.incomplete()
	var b bytes.Buffer
	b.WriteString(strings.Join(t.header, ",") + "\n")
	for _, r := range t.rows {
		b.WriteString(strings.Join(r, ",") + "\n")
	}
	return b.Bytes()
}

// incomplete is the extract with the added missingness, and the random
// stream the imputations continue.
func (ms Missing) incomplete() (table, *rand.Rand) {
	t := parseTable(ms.Extract.CSV())
	r := rand.New(rand.NewPCG(ms.Seed, 0x1a9b7e55))
	age, out, bmi, alb := t.col("age"), t.col("ppc_30d"), t.col("bmi"), t.col("albumin")
	// logit P(missing) = a + 0.5·(age − 65)/10 + 1.0·event, with a set so
	// that about Share of the values go missing.
	a := math.Log(ms.Share/(1-ms.Share)) - 0.25
	for _, row := range t.rows {
		ag, _ := strconv.ParseFloat(row[age], 64)
		eta := a + 0.5*(ag-65)/10
		if row[out] == "yes" {
			eta += 1.0
		}
		pr := 1 / (1 + math.Exp(-eta))
		u := r.Float64()
		if u < pr {
			row[bmi] = "NA"
		}
		// Albumin goes missing with the same chance, correlated with BMI's.
		if (u+r.Float64())/2 < pr {
			row[alb] = "NA"
		}
		if row[alb] == "" {
			row[alb] = "NA"
		}
	}
	return t, r
}

// Stacked returns the M completed datasets as one CSV file: the
// imputation number (1…M) in the column ImputationColumn, then the
// extract's columns, the rows of each imputation in the extract's order.
func (ms Missing) Stacked() []byte {
	t, r := ms.incomplete()
	var b bytes.Buffer
	b.WriteString(ImputationColumn + "," + strings.Join(t.header, ",") + "\n")
	for j, done := range Impute(t, ms.M, r) {
		for _, row := range done {
			fmt.Fprintf(&b, "%d,%s\n", j+1, strings.Join(row, ","))
		}
	}
	return b.Bytes()
}

// Impute completes the missing BMI and albumin values (NA) of an extract
// m times by chained equations with posterior draws (van Buuren &
// Groothuis-Oudshoorn 2011, Journal of Statistical Software 45(3); the
// normal linear model's draws of Rubin 1987, p. 167): starting from the
// observed mean, each variable in turn is regressed on age, sex, smoking,
// lung disease, log operation time, the outcome and the other variable,
// over the rows where it is observed; σ² is drawn as SSR/χ²(n − k) and the
// coefficients from N(β̂, σ²(XᵀX)⁻¹), and every missing value becomes its
// prediction plus N(0, σ²) noise, rounded to 0.1 and kept in the
// generator's range. Ten cycles per imputation, each imputation its own
// chain from the stream r. The outcome is in every imputation model, as
// it must be for the imputations to be proper (Moons et al. 2006, Journal
// of Clinical Epidemiology 59:1092–1101).
func Impute(t table, m int, r *rand.Rand) [][][]string {
	n := len(t.rows)
	type target struct {
		col    int
		lo, hi float64
		x      []float64
		miss   []bool
	}
	bmi := &target{col: t.col("bmi"), lo: 15, hi: 55}
	alb := &target{col: t.col("albumin"), lo: 18, hi: 55}
	targets := []*target{bmi, alb}
	for _, tg := range targets {
		tg.x, tg.miss = make([]float64, n), make([]bool, n)
	}
	age, sex, smoke, lung, mins, out := t.col("age"), t.col("sex"), t.col("smoker"), t.col("lung_disease"), t.col("op_minutes"), t.col("ppc_30d")
	// The fixed columns of every imputation model.
	const k = 9 // intercept, 7 fixed, the other target
	fixed := make([][k - 1]float64, n)
	for i, row := range t.rows {
		ag, _ := strconv.ParseFloat(row[age], 64)
		mn, _ := strconv.ParseFloat(row[mins], 64)
		fixed[i] = [k - 1]float64{1, (ag - 65) / 10, ind(row[sex] == "M"), ind(row[smoke] == "former"), ind(row[smoke] == "current"),
			ind(row[lung] == "yes"), math.Log(mn / 120), ind(row[out] == "yes")}
		for _, tg := range targets {
			v, err := strconv.ParseFloat(row[tg.col], 64)
			tg.miss[i] = err != nil
			tg.x[i] = v
		}
	}
	var done [][][]string
	for j := 0; j < m; j++ {
		for _, tg := range targets {
			var s float64
			var c int
			for i := range tg.x {
				if !tg.miss[i] {
					s += tg.x[i]
					c++
				}
			}
			for i := range tg.x {
				if tg.miss[i] {
					tg.x[i] = s / float64(c)
				}
			}
		}
		for cycle := 0; cycle < 10; cycle++ {
			for ti, tg := range targets {
				other := targets[1-ti]
				var xtx [k][k]float64
				var xty [k]float64
				row := func(i int) [k]float64 {
					var z [k]float64
					copy(z[:], fixed[i][:])
					z[k-1] = other.x[i]
					return z
				}
				nobs := 0
				for i := 0; i < n; i++ {
					if tg.miss[i] {
						continue
					}
					z := row(i)
					for a := 0; a < k; a++ {
						xty[a] += z[a] * tg.x[i]
						for b := 0; b <= a; b++ {
							xtx[a][b] += z[a] * z[b]
						}
					}
					nobs++
				}
				l := cholesky(xtx)
				beta := cholSolve(l, xty)
				var ssr float64
				for i := 0; i < n; i++ {
					if !tg.miss[i] {
						z := row(i)
						e := tg.x[i] - dot(z, beta)
						ssr += e * e
					}
				}
				var chi float64
				for d := 0; d < nobs-k; d++ {
					z := normal(r)
					chi += z * z
				}
				sigma := math.Sqrt(ssr / chi)
				// β* = β̂ + σ L⁻ᵀ z has covariance σ²(XᵀX)⁻¹.
				var z [k]float64
				for a := range z {
					z[a] = normal(r)
				}
				dev := backSolveT(l, z)
				for a := range beta {
					beta[a] += sigma * dev[a]
				}
				for i := 0; i < n; i++ {
					if tg.miss[i] {
						v := dot(row(i), beta) + sigma*normal(r)
						tg.x[i] = clamp(math.Round(v*10)/10, tg.lo, tg.hi)
					}
				}
			}
		}
		rows := make([][]string, n)
		for i, src := range t.rows {
			rows[i] = append([]string(nil), src...)
			for _, tg := range targets {
				if tg.miss[i] {
					rows[i][tg.col] = strconv.FormatFloat(tg.x[i], 'f', -1, 64)
				}
			}
		}
		done = append(done, rows)
	}
	return done
}

func ind(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func dot(a, b [9]float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// cholesky returns the lower triangle L with LLᵀ = A, of which only the
// lower triangle is read.
func cholesky(a [9][9]float64) [9][9]float64 {
	var l [9][9]float64
	for i := 0; i < 9; i++ {
		for j := 0; j <= i; j++ {
			s := a[i][j]
			for p := 0; p < j; p++ {
				s -= l[i][p] * l[j][p]
			}
			if i == j {
				l[i][i] = math.Sqrt(s)
			} else {
				l[i][j] = s / l[j][j]
			}
		}
	}
	return l
}

// cholSolve solves LLᵀx = b.
func cholSolve(l [9][9]float64, b [9]float64) [9]float64 {
	var y [9]float64
	for i := 0; i < 9; i++ {
		s := b[i]
		for p := 0; p < i; p++ {
			s -= l[i][p] * y[p]
		}
		y[i] = s / l[i][i]
	}
	return backSolveT(l, y)
}

// backSolveT solves Lᵀx = y.
func backSolveT(l [9][9]float64, y [9]float64) [9]float64 {
	var x [9]float64
	for i := 8; i >= 0; i-- {
		s := y[i]
		for p := i + 1; p < 9; p++ {
			s -= l[p][i] * x[p]
		}
		x[i] = s / l[i][i]
	}
	return x
}
