package validate

// WithDefaults returns the options with every zero field replaced by its
// default, as Assess uses them.
func (o Options) WithDefaults() Options {
	o.defaults()
	return o
}
