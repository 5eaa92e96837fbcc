package events

import (
	"encoding/json"
	"math"
	"os/exec"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/tooltest"
	"github.com/kinmap/kinmap/mapper"
)

// wineScript loads the wine recognition data bundled with scikit-learn
// (UCI Machine Learning Repository, Wine; M. Forina et al., PARVUS, 1988,
// as described by S. Aeberhard, D. Coomans and O. de Vel, 1992), cuts
// ten stratified folds in two shuffles (random_state 0 and 1) and scores a
// plain k-nearest-neighbour classifier (k = 5, features standardised on
// the training folds) on each fold.
const wineScript = `
import json
from sklearn.datasets import load_wine
from sklearn.model_selection import StratifiedKFold
from sklearn.neighbors import KNeighborsClassifier
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
X, y = load_wine(return_X_y=True)
draws = []
for state in (0, 1):
    folds, acc = [], []
    for train, test in StratifiedKFold(n_splits=10, shuffle=True, random_state=state).split(X, y):
        knn = make_pipeline(StandardScaler(), KNeighborsClassifier(n_neighbors=5)).fit(X[train], y[train])
        acc.append(float(knn.score(X[test], y[test])))
        folds.append(test.tolist())
    draws.append({"folds": folds, "knn": acc})
print(json.dumps({"x": X.tolist(), "y": y.tolist(), "draws": draws}))
`

// TestWineAgainstKNN compares the classification by map region with
// scikit-learn's k-nearest-neighbour classifier on the raw features under
// the same ten folds, in two shuffles: a map trained on the training folds, its units
// labelled by the training windows they win, classifies each test window
// (Unknown counts as wrong). The map must come within 5 points of k-NN's
// cross-validated accuracy.
func TestWineAgainstKNN(t *testing.T) {
	py := tooltest.Python(t, "sklearn")
	out, err := exec.Command(py, "-c", wineScript).Output()
	if err != nil {
		t.Fatalf("%s: %v", py, err)
	}
	var data struct {
		X     [][]float64
		Y     []int
		Draws []struct {
			Folds [][]int
			KNN   []float64
		}
	}
	if err := json.Unmarshal(out, &data); err != nil {
		t.Fatal(err)
	}
	if len(data.X) != 178 || len(data.Draws) != 2 {
		t.Fatalf("%d samples in %d draws; the wine data has 178", len(data.X), len(data.Draws))
	}
	for state, d := range data.Draws {
		// k-NN's folds differ in size by one at most; weight them by size
		// to compare with the map's pooled accuracy.
		var knnRight float64
		total := 0
		for f, a := range d.KNN {
			knnRight += a * float64(len(d.Folds[f]))
			total += len(d.Folds[f])
		}
		knnAcc := knnRight / float64(total)
		mapAcc := wineMapAccuracy(t, data.X, data.Y, d.Folds)
		t.Logf("wine, 10-fold stratified CV (random_state %d): map region %.3f, scikit-learn k-NN (k=5) %.3f", state, mapAcc, knnAcc)
		if mapAcc < knnAcc-0.05 {
			t.Errorf("random_state %d: classification by map region %.3f is more than 5 points below k-NN's %.3f", state, mapAcc, knnAcc)
		}
	}
}

// wineMapAccuracy returns the pooled accuracy of classification by map
// region over the folds.
func wineMapAccuracy(t *testing.T, x [][]float64, y []int, folds [][]int) float64 {
	names := []string{"class_0", "class_1", "class_2"}
	var right, total int
	for _, test := range folds {
		isTest := make(map[int]bool)
		for _, i := range test {
			isTest[i] = true
		}
		var train []int
		for i := range x {
			if !isTest[i] {
				train = append(train, i)
			}
		}
		xtr, xte := standardised(x, train, test)
		cfg := mapper.Config{Hex: true}
		m, cfg, err := mapper.Train(xtr, cfg)
		if err != nil {
			t.Fatal(err)
		}
		asg := m.Assign(xtr, cfg.Workers)
		known := make([]features.Window, len(train))
		for k, i := range train {
			known[k] = features.Window{Unit: asg[k].BMU, Marked: names[y[i]]}
		}
		know := Count(m.Units(), known)
		asked := make([]features.Window, len(test))
		for k, a := range m.Assign(xte, 1) {
			asked[k].Unit = a.BMU
		}
		Classify(m.Lattice, know, asked, false, DefaultConfig())
		for k, w := range asked {
			if w.Condition == names[y[test[k]]] {
				right++
			}
		}
		total += len(test)
	}
	return float64(right) / float64(total)
}

// standardised returns the rows train and test of x scaled by the mean and
// standard deviation (population, as scikit-learn's StandardScaler) of the
// training rows.
func standardised(x [][]float64, train, test []int) (*mat.Dense, *mat.Dense) {
	d := len(x[0])
	mean, sd := make([]float64, d), make([]float64, d)
	col := make([]float64, len(train))
	for j := range d {
		for k, i := range train {
			col[k] = x[i][j]
		}
		m, v := stat.PopMeanVariance(col, nil)
		mean[j], sd[j] = m, math.Sqrt(v)
	}
	rows := func(idx []int) *mat.Dense {
		out := mat.NewDense(len(idx), d, nil)
		for k, i := range idx {
			for j := range d {
				out.Set(k, j, (x[i][j]-mean[j])/sd[j])
			}
		}
		return out
	}
	return rows(train), rows(test)
}
