package metrics

// WeightedRisks is Weighted for a caller that holds the risks already:
// p[i] must be logistic.Expit(lp[i]) (as logistic.Data.Predict gives
// them), and the results are exactly Weighted's, without its one
// exponential per row for the mean risk.
//
// WeightedRisks panics as Weighted does, and if p and y differ in length.
func (ws *CalibrationWorkspace) WeightedRisks(y, lp, p, w []float64, workers int) (citl, slope float64, err error) {
	checkLinear("CalibrationWeighted", y, lp)
	checkWeights("CalibrationWeighted", y, w)
	checkLengths("CalibrationWeighted", y, p)
	return ws.weighted(y, lp, p, w, workers)
}
