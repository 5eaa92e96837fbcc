package score

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os/exec"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/tooltest"
)

// Worked by hand from the definitions, so that the formulas are checked
// without any outside program.
func TestPartitionWorked(t *testing.T) {
	tests := []struct {
		name     string
		a, b     []int
		ari, ami float64
		checkAMI bool
	}{
		// Hubert and Arabie 1985: contingency cells 2, 1, 1; Σ C(n_ij, 2) = 1,
		// Σ C(a_i, 2) = 1, Σ C(b_j, 2) = 2, C(4, 2) = 6, expected 1·2/6 = 1/3,
		// max 3/2, so ARI = (1 − 1/3) / (3/2 − 1/3) = 4/7. scikit-learn's
		// documentation shows the same pair scoring 0.57 (from memory).
		{name: "merge", a: []int{0, 0, 1, 2}, b: []int{0, 0, 1, 1}, ari: 4.0 / 7},
		// Label values only name groups.
		{name: "relabelled", a: []int{0, 0, 1, 1}, b: []int{5, 5, 3, 3}, ari: 1, ami: 1, checkAMI: true},
		// Cells 1, 1, 1, 1: index 0, Σ C(a_i, 2) = Σ C(b_j, 2) = 2, expected
		// 4/6, so ARI = (0 − 2/3) / (2 − 2/3) = −1/2. MI = 0; under the
		// hypergeometric model each cell holds 1 item with probability 2/3
		// (log term 0) and 2 with probability 1/6 (term 2/4 · log 2), so
		// E[MI] = 4 · log 2 / 12 = log 2 / 3; H(U) = H(V) = log 2, and
		// AMI = (0 − log 2/3) / (log 2 − log 2/3) = −1/2.
		{name: "crossed", a: []int{0, 0, 1, 1}, b: []int{0, 1, 0, 1}, ari: -0.5, ami: -0.5, checkAMI: true},
		// One group on both sides: the same partition.
		{name: "one group", a: []int{1, 1, 1}, b: []int{2, 2, 2}, ari: 1, ami: 1, checkAMI: true},
		// One group of a large fleet's size, n = 111 964, where C(n, 2)² / C(n, 2)
		// does not round back to C(n, 2) in float64.
		{name: "one large group", a: make([]int, 111_964), b: slices.Repeat([]int{4}, 111_964), ari: 1, ami: 1, checkAMI: true},
		// All apart on both sides: the same partition again.
		{name: "all apart", a: []int{0, 1, 2}, b: []int{2, 0, 1}, ari: 1},
		// One group against two: no pair agrees beyond chance. Σ C(a_i, 2)
		// = 6, Σ C(b_j, 2) = 2, index 2, expected 6·2/6 = 2: ARI 0; MI and
		// E[MI] are 0 with H(U) = 0, so AMI is 0 too.
		{name: "one against two", a: []int{0, 0, 0, 0}, b: []int{0, 0, 1, 1}, ari: 0, ami: 0, checkAMI: true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := ARI(tt.a, tt.b); math.Abs(got-tt.ari) > 1e-12 {
				t.Errorf("ARI(%v, %v) = %.15g, want %.15g", tt.a, tt.b, got, tt.ari)
			}
			if got := AMI(tt.a, tt.b); tt.checkAMI && math.Abs(got-tt.ami) > 1e-12 {
				t.Errorf("AMI(%v, %v) = %.15g, want %.15g", tt.a, tt.b, got, tt.ami)
			}
		})
	}
}

// ARI and AMI agree with scikit-learn's adjusted_rand_score and
// adjusted_mutual_info_score (default average_method "arithmetic") run by
// Debian's system Python, on random partitions of many shapes: few and
// many groups, skewed sizes, a group holding nearly everything, and one
// fleet-sized labelling.
func TestPartitionAgreesWithScikitLearn(t *testing.T) {
	py := tooltest.Python(t, "sklearn")
	r := rand.New(rand.NewPCG(14, 2))
	type pair struct{ A, B []int }
	var cases []pair
	for range 60 {
		n := 1 + r.IntN(400)
		ka, kb := 1+r.IntN(12), 1+r.IntN(12)
		cases = append(cases, pair{randomLabels(r, n, ka), randomLabels(r, n, kb)})
	}
	// Correlated labellings, where ARI and AMI are far from 0: the second
	// copies the first but for a share of items.
	for _, noise := range []float64{0, 0.02, 0.1, 0.5} {
		a := randomLabels(r, 3000, 6)
		b := make([]int, len(a))
		for i, v := range a {
			b[i] = v + 10
			if r.Float64() < noise {
				b[i] = r.IntN(8)
			}
		}
		cases = append(cases, pair{a, b})
	}
	// One large group with a few small ones, as with rare regimes.
	skew := make([]int, 2000)
	for i := range skew {
		if r.Float64() < 0.04 {
			skew[i] = 1 + r.IntN(3)
		}
	}
	cases = append(cases, pair{skew, randomLabels(r, 2000, 4)})
	// A fleet's size: 300 sites of 28 windows.
	big := randomLabels(r, 8400, 6)
	bigPred := make([]int, len(big))
	for i, v := range big {
		bigPred[i] = v % 4
		if r.Float64() < 0.05 {
			bigPred[i] = 7
		}
	}
	cases = append(cases, pair{big, bigPred})

	in, err := json.Marshal(cases)
	if err != nil {
		t.Fatal(err)
	}
	const script = `
import json, sys
from sklearn.metrics import adjusted_rand_score, adjusted_mutual_info_score
out = []
for c in json.load(sys.stdin):
    out.append([adjusted_rand_score(c["A"], c["B"]), adjusted_mutual_info_score(c["A"], c["B"])])
json.dump(out, sys.stdout)
`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = strings.NewReader(string(in))
	raw, err := cmd.Output()
	if err != nil {
		t.Fatalf("scikit-learn: %v", err)
	}
	var want [][2]float64
	if err := json.Unmarshal(raw, &want); err != nil {
		t.Fatalf("scikit-learn output: %v", err)
	}
	if len(want) != len(cases) {
		t.Fatalf("scikit-learn scored %d cases, want %d", len(want), len(cases))
	}
	for i, c := range cases {
		ari, ami := ARI(c.A, c.B), AMI(c.A, c.B)
		if math.Abs(ari-want[i][0]) > 1e-9 || math.Abs(ami-want[i][1]) > 1e-9 {
			t.Errorf("case %d (%d items): ARI %.12g, AMI %.12g; scikit-learn %.12g, %.12g", i, len(c.A), ari, ami, want[i][0], want[i][1])
		}
	}
}

// randomLabels returns n labels out of k with sizes that differ: label l is
// drawn with weight l+1.
func randomLabels(r *rand.Rand, n, k int) []int {
	total := k * (k + 1) / 2
	labels := make([]int, n)
	for i := range labels {
		u := r.IntN(total)
		l := 0
		for u >= l+1 {
			u -= l + 1
			l++
		}
		labels[i] = l
	}
	return labels
}

// Labellings of different lengths are a programming error.
func TestPartitionLengthMismatch(t *testing.T) {
	for name, f := range map[string]func([]int, []int) float64{"ARI": ARI, "AMI": AMI, "Covering": Covering} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s of lengths 2 and 3 did not panic", name)
				}
			}()
			f([]int{0, 1}, []int{0, 1, 1})
		}()
	}
}
