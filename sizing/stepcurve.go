package sizing

// powerCurveStep: a constant load power pl (W) through a converter whose
// efficiency follows m.effCurve. Not yet written: see the issue's
// converter item.
func (m *bankModel) powerCurveStep(pl, dur, v0, minV, maxV float64, o *stepOutcome) {
	panic("sizing: powerCurveStep not written")
}
