package metrics

// WeightedRisks is Weighted for a caller that holds the risks already:
// p[i] must be logistic.Expit(lp[i]) and z[i] e^−|lp[i]| (as
// logistic.Data.Predict gives them). The results are exactly Weighted's,
// with three exponentials per row fewer: the mean risk and the slope
// fit's first step, at intercept 0 and slope 1, read p, and the
// intercept fit's e^lp is z wherever lp is negative (in [−700, 0)).
//
// WeightedRisks panics as Weighted does, and if p or z is not as long as
// y.
func (ws *CalibrationWorkspace) WeightedRisks(y, lp, p, z, w []float64, workers int) (citl, slope float64, err error) {
	checkLinear("CalibrationWeighted", y, lp)
	checkWeights("CalibrationWeighted", y, w)
	checkLengths("CalibrationWeighted", y, p)
	checkLengths("CalibrationWeighted", y, z)
	return ws.weighted(y, lp, p, z, w, workers)
}
