package validate

// The bases of an OutOfRange warning.
const (
	// BasisDevelopmentRange is a value beyond the development range the
	// frozen model states for the predictor (development_range).
	BasisDevelopmentRange = "development range"
	// BasisMissingCode is a value such as 999 or −1, in a predictor
	// without a stated development range, that lies far beyond the
	// column's other values: likely a code for a value not recorded.
	BasisMissingCode = "missing-value code"
)

// OutOfRange is a warning about predictor values of the audited cohort
// that the model scores but that lie beyond what it was developed on:
// values above (or below) the development range the frozen model states,
// or, without one, a value that looks like a missing-value code. It
// changes no measure; it says which risks rest on an extrapolation or on
// a code read as a value.
type OutOfRange struct {
	// File and Column are where the values are.
	File   string `json:"file"`
	Column string `json:"column"`
	// Basis is BasisDevelopmentRange or BasisMissingCode.
	Basis string `json:"basis"`
	// Side is "above" or "below".
	Side string `json:"side"`
	// Bound is the development maximum (or minimum) exceeded, or for a
	// missing-value code the largest (smallest) of the column's other
	// values.
	Bound float64 `json:"bound"`
	// Rows counts the rows scored with such a value: beyond Bound, or
	// equal to the code.
	Rows int `json:"rows"`
	// Value is the most extreme of them (the code itself), and Line the
	// first line holding it (a row number for a columnar file).
	Value float64 `json:"value"`
	Line  int     `json:"line"`
	// Text is the warning as the report and stderr give it.
	Text string `json:"text"`
}
