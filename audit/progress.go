package audit

// Progress hears how a long run goes. Its methods are called from the
// goroutine that called Run (Count also from the bootstrap's workers,
// one call at a time), and must return quickly.
type Progress interface {
	// Step says that a named step begins, such as "measuring".
	Step(what string)
	// Count says that done of total items of a step are finished, such
	// as bootstrap replicates.
	Count(what string, done, total int)
	// Done says that the run has finished, successfully or not.
	Done()
}

// Silent is a Progress that reports nothing.
type Silent struct{}

// Step does nothing.
func (Silent) Step(string) {}

// Count does nothing.
func (Silent) Count(string, int, int) {}

// Done does nothing.
func (Silent) Done() {}

// progressOf returns p, or Silent when p is nil.
func progressOf(p Progress) Progress {
	if p == nil {
		return Silent{}
	}
	return p
}
