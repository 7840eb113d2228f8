package validate

import (
	"errors"
	"fmt"
)

// ErrOneOutcome is the kind of every *OutcomesError: the measures need
// both events and non-events.
var ErrOneOutcome = errors.New("both outcomes are needed")

// OutcomesError reports data with only one outcome: no events, or no
// non-events. It matches ErrOneOutcome with errors.Is.
type OutcomesError struct {
	Events, Rows int
}

// Error says how many events there are among how many rows.
func (e *OutcomesError) Error() string {
	return fmt.Sprintf("the cohort has %d events among %d rows: both outcomes are needed", e.Events, e.Rows)
}

// Is reports whether target is ErrOneOutcome.
func (e *OutcomesError) Is(target error) bool { return target == ErrOneOutcome }
