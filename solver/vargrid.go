package solver

import (
	"fmt"
	"math"
)

// Axes names the orientation of a tensor grid for a vector process (the
// manifest key axes).
type Axes int

const (
	// AxesPrincipal lays the grid along the eigenvectors of the stationary
	// covariance Σ, scaled by the square roots of its eigenvalues, so the N^d
	// points cover the ergodic set of a correlated process evenly.
	AxesPrincipal Axes = iota
	// AxesCoordinate lays the grid along the coordinate axes, scaled by the
	// stationary standard deviation of each component.
	AxesCoordinate
)

var axesNames = [...]string{"principal", "coordinate"}

func (a Axes) String() string {
	if int(a) >= 0 && int(a) < len(axesNames) {
		return axesNames[a]
	}
	return fmt.Sprintf("Axes(%d)", int(a))
}

// ParseAxes maps "principal" or "coordinate" to its Axes.
func ParseAxes(s string) (Axes, error) {
	for i, n := range axesNames {
		if n == s {
			return Axes(i), nil
		}
	}
	return 0, fmt.Errorf("solver: unknown axes %q (want principal or coordinate)", s)
}

// AxesNames lists the accepted names of Axes.
func AxesNames() []string { return append([]string(nil), axesNames[:]...) }

// axisFrame returns the d×d matrix A (row-major) whose columns are the grid
// axes: a grid point with standardized axis coordinates a is μ + A a.
// Principal axes are the eigenvectors of sigma in order of decreasing
// eigenvalue, each scaled by √λ and signed so that its largest entry is
// positive (a deterministic choice, since eigenvectors are defined up to sign).
func axisFrame(axes Axes, sigma []float64, d int) []float64 {
	a := make([]float64, d*d)
	switch axes {
	case AxesCoordinate:
		for k := 0; k < d; k++ {
			a[k*d+k] = math.Sqrt(sigma[k*d+k])
		}
	case AxesPrincipal:
		vals, vecs := symEigen(sigma, d) // ascending
		for col := 0; col < d; col++ {
			src := d - 1 - col // decreasing eigenvalue
			big, sign := 0.0, 1.0
			for r := 0; r < d; r++ {
				if v := vecs[r*d+src]; math.Abs(v) > big+1e-12 {
					big, sign = math.Abs(v), math.Copysign(1, v)
				}
			}
			scale := float64(sign * math.Sqrt(math.Max(vals[src], 0)))
			for r := 0; r < d; r++ {
				a[r*d+col] = float64(scale * vecs[r*d+src])
			}
		}
	default:
		panic(fmt.Sprintf("solver: unknown grid axes %d", int(axes)))
	}
	return a
}

// tensorGrid returns the N^d points μ + A a for all combinations of the
// standardized axis nodes, row-major with the first axis varying slowest,
// and the log of each point's product weight Σ_k logW[a_k].
func tensorGrid(mu, frame []float64, d int, nodes, logW []float64) (grid, logWeights []float64) {
	n := len(nodes)
	total := 1
	for k := 0; k < d; k++ {
		total *= n
	}
	grid = make([]float64, total*d)
	logWeights = make([]float64, total)
	idx := make([]int, d)
	for s := 0; s < total; s++ {
		rem := s
		for k := d - 1; k >= 0; k-- {
			idx[k] = rem % n
			rem /= n
		}
		x := grid[s*d : (s+1)*d]
		copy(x, mu)
		var lw float64
		for k := 0; k < d; k++ {
			a := nodes[idx[k]]
			lw += logW[idx[k]]
			for r := 0; r < d; r++ {
				x[r] += float64(frame[r*d+k] * a)
			}
		}
		logWeights[s] = lw
	}
	return grid, logWeights
}
