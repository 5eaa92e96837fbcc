package features

// Slots returns the time slot of every window of t: its start in strides
// from the earliest start, rounded, so that the windows of the fleet at
// one time share a slot even when sites start their days at different
// hours. It returns nil for a table without windows or stride.
func (t *Table) Slots() []int {
	if len(t.Windows) == 0 {
		return nil
	}
	stride := t.Config.Stride
	if stride <= 0 {
		stride = t.Config.Window
	}
	if stride <= 0 {
		return nil
	}
	first := t.Windows[0].Start
	for _, w := range t.Windows {
		if w.Start.Before(first) {
			first = w.Start
		}
	}
	slots := make([]int, len(t.Windows))
	for i, w := range t.Windows {
		slots[i] = int((w.Start.Sub(first) + stride/2) / stride)
	}
	return slots
}
