package logistic

import (
	"errors"
	"fmt"
	"sort"
)

// checkRows checks that d.Rows, when set, lists in ascending order
// exactly the rows of nonzero weight.
func (d Data) checkRows() error {
	if d.Rows == nil {
		return nil
	}
	if d.Weights == nil {
		return errors.New("logistic: Rows without Weights")
	}
	prev := -1
	for _, r := range d.Rows {
		i := int(r)
		if i <= prev || i >= d.N || d.Weights[i] == 0 {
			return fmt.Errorf("logistic: Rows must list the rows of nonzero weight in ascending order (row %d)", i)
		}
		prev = i
	}
	nonzero := 0
	for _, w := range d.Weights {
		if w != 0 {
			nonzero++
		}
	}
	if nonzero != len(d.Rows) {
		return fmt.Errorf("logistic: %d rows of nonzero weight, %d in Rows", nonzero, len(d.Rows))
	}
	return nil
}

// rowsIn returns the rows of d.Rows in [lo, hi), or nil without Rows.
func (d Data) rowsIn(lo, hi int) []int32 {
	if d.Rows == nil {
		return nil
	}
	a := sort.Search(len(d.Rows), func(k int) bool { return int(d.Rows[k]) >= lo })
	b := sort.Search(len(d.Rows), func(k int) bool { return int(d.Rows[k]) >= hi })
	return d.Rows[a:b:b]
}
