package kinmap

import (
	"fmt"
	"strings"
	"testing"
)

// One warning names the features left out for having no variance, however
// many there are: a dump of 5,000 channels once gave 3,466 warnings.
func TestDroppedWarning(t *testing.T) {
	many := make([]string, 3466)
	for i := range many {
		many[i] = fmt.Sprintf("c%d.flat", i)
	}
	tests := []struct {
		names []string
		want  string
	}{
		{[]string{"a.flat"}, "feature a.flat has no variance in the training windows and is left out"},
		{[]string{"a.flat", "b.p05"}, "2 features have no variance in the training windows and are left out: a.flat, b.p05"},
		{many, "3466 features have no variance in the training windows and are left out: " +
			strings.Join(many[:10], ", ") + " and 3456 more"},
	}
	for _, tt := range tests {
		if got := droppedWarning(tt.names); got != tt.want {
			t.Errorf("droppedWarning(%d names) = %q, want %q", len(tt.names), got, tt.want)
		}
	}
}
