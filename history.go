package kinmap

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"

	"github.com/kinmap/kinmap/mapper"
)

// lineageOf returns the lineage of m: its own, or for a model that records
// none (a new map, one trained before lineages, or by a runner that does
// not set it) one derived from what its regime numbers mean: the feature
// schema, the lattice and the regime of every unit. Not from the codebook:
// two runs that differ only by rounding, such as the local and the Beam
// batch map, make the same regimes and so number them the same.
func lineageOf(m *mapper.Model) string {
	if m.Lineage != "" {
		return m.Lineage
	}
	h := sha256.New()
	for _, n := range m.FeatureNames {
		fmt.Fprintf(h, "%q ", n)
	}
	l := m.Map.Lattice
	fmt.Fprintf(h, "\n%d %d %t %t\n", l.Cols, l.Rows, l.Hex, l.Flat)
	for _, id := range m.UnitRegime {
		binary.Write(h, binary.LittleEndian, int64(id))
	}
	return hex.EncodeToString(h.Sum(nil)[:8])
}
