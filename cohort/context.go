package cohort

import "context"

// LoadContext is Load with a context: a cancelled ctx stops the read
// and returns context.Cause(ctx).
func LoadContext(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	fr, err := Load(path, reqs, opt)
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	return fr, err
}
