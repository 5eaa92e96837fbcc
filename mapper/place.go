package mapper

import (
	"fmt"

	"github.com/kinmap/kinmap/features"
)

// Place records in each window of ws where it landed on the map: its unit,
// second unit and quantization error from asg, which holds one assignment
// per window in order, as Map.Assign gives for the windows' scaled rows.
func Place(ws []features.Window, asg []Assignment) error {
	if len(asg) != len(ws) {
		return fmt.Errorf("mapper: %d assignments for %d windows", len(asg), len(ws))
	}
	for i, a := range asg {
		w := &ws[i]
		w.Unit, w.Second, w.QE = a.BMU, a.Second, a.QE
	}
	return nil
}
