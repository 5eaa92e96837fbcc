package kinmap

import (
	"fmt"

	"github.com/kinmap/kinmap/labels"
	"github.com/kinmap/kinmap/model"
)

// unlabelledWarnings names, when the model an update started from had
// labels, the regimes of the update that have none (new regimes, the
// other parts of a split among them) and the labelled regimes that are
// gone: the user's labels no longer cover the map.
func unlabelledWarnings(prev *model.Model, changes []model.RegimeChange) []string {
	if !model.Labelled(prev.Regimes) {
		return nil
	}
	label := make(map[int]string, len(prev.Regimes))
	for _, g := range prev.Regimes {
		label[g.ID] = labels.Words(g.Name, g.Status)
	}
	parent := map[int]int{}
	for _, c := range changes {
		if c.Kind == model.ChangeSplit {
			for _, id := range c.To {
				parent[id] = c.From[0]
			}
		}
	}
	var out []string
	for _, c := range changes {
		switch c.Kind {
		case model.ChangeNew:
			id := c.To[0]
			if p, ok := parent[id]; ok {
				out = append(out, fmt.Sprintf("regime %d is new, split from regime %d (%s), and has no name or status: label it with kinmap label", id, p, label[p]))
			} else {
				out = append(out, fmt.Sprintf("regime %d is new and has no name or status: label it with kinmap label", id))
			}
		case model.ChangeGone:
			if id := c.From[0]; label[id] != "unlabelled" {
				out = append(out, fmt.Sprintf("regime %d (%s) is gone: no regime of the update matches it, and its label goes with it", id, label[id]))
			}
		}
	}
	return out
}
