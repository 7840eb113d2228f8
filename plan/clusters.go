package plan

import (
	"strconv"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/meta"
)

// Clusters are the options of the validation across clusters, from the
// plan's clusters section (the column itself is the top-level key
// cluster). Each key given is marked in Plan.Set as "clusters.KEY".
type Clusters struct {
	Tau2Method, CIMethod string
	MinEvents            int
	AcceptAUC            float64
	// AcceptSlope and AcceptOE are LOW:HIGH, as the flags take them.
	AcceptSlope, AcceptOE string
}

var clusterKeys = []string{"tau2_method", "ci_method", "min_events", "accept_auc", "accept_slope", "accept_oe"}

// clusters reads the clusters section:
//
//	clusters:
//	  tau2_method: reml      # reml, dl or pm
//	  ci_method: hksj        # hksj or wald
//	  min_events: 10
//	  accept_auc: 0.7
//	  accept_slope: [0.9, 1.1]
//	  accept_oe: [0.8, 1.2]
func (p *parser) clusters(c *Clusters, v *yaml.Node, set map[string]bool) error {
	return p.fields(v, "clusters", clusterKeys, func(k string, n *yaml.Node) error {
		set["clusters."+k] = true
		var err error
		switch k {
		case "tau2_method":
			if c.Tau2Method, err = p.str(n, k); err == nil {
				if _, merr := meta.ParseTau2Method(c.Tau2Method); merr != nil {
					return p.wrapf(ErrValue, merr, n, "clusters: tau2_method must be reml (the default), dl or pm, not %s", cohort.Quote(c.Tau2Method))
				}
			}
		case "ci_method":
			if c.CIMethod, err = p.str(n, k); err == nil {
				if _, merr := meta.ParseCIMethod(c.CIMethod); merr != nil {
					return p.wrapf(ErrValue, merr, n, "clusters: ci_method must be hksj (the default) or wald, not %s", cohort.Quote(c.CIMethod))
				}
			}
		case "min_events":
			if c.MinEvents, err = p.whole(n, k); err == nil && c.MinEvents < 1 {
				return p.errf(ErrValue, n, "clusters: min_events must be at least 1")
			}
		case "accept_auc":
			c.AcceptAUC, err = p.num(n, k)
		case "accept_slope", "accept_oe":
			if n.Kind != yaml.SequenceNode || len(n.Content) != 2 {
				return p.errf(ErrValue, n, "clusters: %s must be a range [LOW, HIGH], such as [0.9, 1.1]", k)
			}
			lo, err := p.num(n.Content[0], k)
			if err != nil {
				return err
			}
			hi, err := p.num(n.Content[1], k)
			if err != nil {
				return err
			}
			if !(lo < hi) {
				return p.errf(ErrValue, n, "clusters: %s [%g, %g]: LOW must be below HIGH", k, lo, hi)
			}
			r := strconv.FormatFloat(lo, 'g', -1, 64) + ":" + strconv.FormatFloat(hi, 'g', -1, 64)
			if k == "accept_slope" {
				c.AcceptSlope = r
			} else {
				c.AcceptOE = r
			}
		}
		return err
	})
}
