package picture

import (
	"strings"

	"github.com/kinmap/kinmap/mapper"
)

// legendText is a regime's line in a legend: the user's name and status,
// when given, before the description, as in `"baseline" (normal): flow
// median 41 …`.
func legendText(r mapper.Regime) string {
	var label []string
	if r.Name != "" {
		label = append(label, "\u201c"+r.Name+"\u201d")
	}
	if r.Status != "" {
		label = append(label, "("+r.Status+")")
	}
	if len(label) == 0 {
		return r.Description
	}
	return strings.Join(label, " ") + ": " + r.Description
}
