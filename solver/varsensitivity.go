package solver

import (
	"errors"
	"fmt"
	"math"
)

// ErrNotDifferentiable reports a chain at parameters where it has no
// derivative: principal axes at a repeated eigenvalue of the stationary
// covariance (the axes turn discontinuously there).
var ErrNotDifferentiable = errors.New("solver: the chain is not differentiable at these parameters")

// varMotion is the motion of a VAR problem's inputs along one parameter:
// of the grid (n×d), of every from-state's conditional mean (n×d), of the
// innovation covariance's Cholesky factor and of its marginal standard
// deviations.
type varMotion struct {
	grid, means, chol, sd []float64
}

// Sensitivities builds the chain as Discretize does (method maxent) and
// its derivatives with respect to every intercept c_k, every coefficient
// B_rc and every innovation covariance Ψ_rc, r ≤ c (Params
// "intercept[k]", "coef[r][c]", "cov[r][c]"; a covariance parameter moves
// Ψ_rc and Ψ_cr together, as the symmetric matrix it is), by the implicit
// differentiation described at Sensitivity. The grid moves with the
// stationary mean μ = (I − B)⁻¹c and the axes of the stationary covariance
// Σ = BΣBᵀ + Ψ, whose derivative solves the Lyapunov equation
//
//	dΣ = B dΣ Bᵀ + dB Σ Bᵀ + B Σ dBᵀ + dΨ;
//
// principal axes move as the eigenvectors of Σ do (dv_k = Σ_{l≠k}
// v_lᵀ dΣ v_k/(λ_k − λ_l) v_l, dλ_k = v_kᵀ dΣ v_k; Magnus and Neudecker
// 1999, ch. 8), so at a repeated eigenvalue there is no derivative and
// Sensitivities returns an error wrapping ErrNotDifferentiable. The
// Cholesky factor L of Ψ moves by dL = L Φ(L⁻¹ dΨ L⁻ᵀ), Φ taking the
// lower triangle with half the diagonal (Murray 2016). It returns
// ErrNoSensitivities for method tauchen.
func (p VAR) Sensitivities(s Settings) (*Chain, *Sensitivity, error) {
	if s.Method != MaxEnt {
		return nil, nil, ErrNoSensitivities
	}
	if err := p.Validate(); err != nil {
		return nil, nil, err
	}
	d := p.Dim()
	if err := checkTensorStates(s.States, d); err != nil {
		return nil, nil, err
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, nil, badParam("width", s.Width, "finite and > 0")
	}
	if s.Axes != AxesPrincipal && s.Axes != AxesCoordinate {
		return nil, nil, badParam("axes", float64(s.Axes), "principal or coordinate")
	}
	L, err := vectorMoments(s)
	if err != nil {
		return nil, nil, err
	}
	grid, logWeights, law := p.maxentProblem(s)
	n := len(logWeights)
	c := &Chain{Dim: d, Grid: grid, Method: MaxEnt, Moments: L,
		Transition: make([]float64, n*n), Matched: make([]int, n), Certificates: make([]Certificate, n)}
	keep := &rowMultipliers{}
	maxentVectorRowsKeep(grid, logWeights, law, L, s.Matching, c.Transition, c.Matched, c.Certificates, keep)

	// Standardized axis coordinates of every grid point: x_j = μ + A a_j.
	mu, sigma := p.StationaryMean(), p.StationaryCov()
	frame := axisFrame(s.Axes, sigma, d)
	coords := axisCoordinates(grid, mu, frame, d)

	var params []string
	var dirs []varDirection
	for k := 0; k < d; k++ {
		params = append(params, fmt.Sprintf("intercept[%d]", k))
		dirs = append(dirs, varDirection{intercept: k, coef: -1, cov: -1})
	}
	for r := 0; r < d; r++ {
		for col := 0; col < d; col++ {
			params = append(params, fmt.Sprintf("coef[%d][%d]", r, col))
			dirs = append(dirs, varDirection{intercept: -1, coef: r*d + col, cov: -1})
		}
	}
	for r := 0; r < d; r++ {
		for col := r; col < d; col++ {
			params = append(params, fmt.Sprintf("cov[%d][%d]", r, col))
			dirs = append(dirs, varDirection{intercept: -1, coef: -1, cov: r*d + col})
		}
	}
	sens := &Sensitivity{Params: params, Grid: make([][]float64, len(dirs)), Transition: make([][]float64, len(dirs))}
	for t, dir := range dirs {
		mo, err := p.motion(s.Axes, dir, mu, sigma, frame, coords, grid, law)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", params[t], err)
		}
		sens.Grid[t] = mo.grid
		sens.Transition[t] = make([]float64, n*n)
		vectorRowSens(grid, logWeights, law, L, c.Transition, keep, mo, sens.Transition[t])
	}
	if _, sens.Stationary, err = stationaryDeriv(c.Transition, n, sens.Transition); err != nil {
		return nil, nil, err
	}
	return c, sens, nil
}

// varDirection is one parameter: the index it moves in the intercept, the
// coefficient matrix (row-major) or the covariance (r*d + c, moving c*d + r
// too); −1 for the others.
type varDirection struct{ intercept, coef, cov int }

// axisCoordinates returns a_j with x_j = μ + A a_j for every grid point.
func axisCoordinates(grid, mu, frame []float64, d int) []float64 {
	f, err := luFactor(frame, d)
	if err != nil {
		panic("solver: singular grid frame")
	}
	n := len(grid) / d
	out := make([]float64, n*d)
	b := make([]float64, d)
	for j := 0; j < n; j++ {
		for k := 0; k < d; k++ {
			b[k] = grid[j*d+k] - mu[k]
		}
		copy(out[j*d:(j+1)*d], f.solve(b))
	}
	return out
}

// motion returns the derivatives of the problem's inputs along dir.
func (p VAR) motion(axes Axes, dir varDirection, mu, sigma, frame, coords, grid []float64, law gaussianVectorLaw) (varMotion, error) {
	d := p.Dim()
	B := p.Coef
	dc, dB, dPsi := make([]float64, d), make([]float64, d*d), make([]float64, d*d)
	switch {
	case dir.intercept >= 0:
		dc[dir.intercept] = 1
	case dir.coef >= 0:
		dB[dir.coef] = 1
	default:
		r, col := dir.cov/d, dir.cov%d
		dPsi[r*d+col], dPsi[col*d+r] = 1, 1
	}
	// dμ = (I − B)⁻¹ (dc + dB μ).
	a := make([]float64, d*d)
	rhs := make([]float64, d)
	for k := 0; k < d; k++ {
		for l := 0; l < d; l++ {
			a[k*d+l] = -B[k*d+l]
			rhs[k] += float64(dB[k*d+l] * mu[l])
		}
		a[k*d+k]++
		rhs[k] += dc[k]
	}
	fa, err := luFactor(a, d)
	if err != nil {
		return varMotion{}, err
	}
	dmuV := fa.solve(rhs)
	// dΣ = B dΣ Bᵀ + (dB Σ Bᵀ + B Σ dBᵀ + dΨ).
	q := make([]float64, d*d)
	for i := 0; i < d; i++ {
		for j := 0; j < d; j++ {
			v := dPsi[i*d+j]
			for k := 0; k < d; k++ {
				for l := 0; l < d; l++ {
					v += float64(dB[i*d+k]*sigma[k*d+l]*B[j*d+l]) + float64(B[i*d+k]*sigma[k*d+l]*dB[j*d+l])
				}
			}
			q[i*d+j] = v
		}
	}
	dSigma, err := Lyapunov(B, q, d)
	if err != nil {
		return varMotion{}, err
	}
	dFrame, err := frameMotion(axes, sigma, dSigma, frame, d)
	if err != nil {
		return varMotion{}, err
	}
	n := len(grid) / d
	mo := varMotion{grid: make([]float64, n*d), means: make([]float64, n*d), chol: make([]float64, d*d), sd: make([]float64, d)}
	for j := 0; j < n; j++ {
		for r := 0; r < d; r++ {
			v := dmuV[r]
			for k := 0; k < d; k++ {
				v += float64(dFrame[r*d+k] * coords[j*d+k])
			}
			mo.grid[j*d+r] = v
		}
	}
	// dm_i = dc + dB x_i + B dx_i.
	for i := 0; i < n; i++ {
		for r := 0; r < d; r++ {
			v := dc[r]
			for k := 0; k < d; k++ {
				v += float64(dB[r*d+k]*grid[i*d+k]) + float64(B[r*d+k]*mo.grid[i*d+k])
			}
			mo.means[i*d+r] = v
		}
	}
	// dL = L Φ(L⁻¹ dΨ L⁻ᵀ).
	Lc := law.chol
	x := make([]float64, d*d) // L⁻¹ dΨ, then L⁻¹ dΨ L⁻ᵀ
	for col := 0; col < d; col++ {
		for r := 0; r < d; r++ {
			v := dPsi[r*d+col]
			for k := 0; k < r; k++ {
				v -= float64(Lc[r*d+k] * x[k*d+col])
			}
			x[r*d+col] = v / Lc[r*d+r]
		}
	}
	y := make([]float64, d*d)
	for r := 0; r < d; r++ { // y = x L⁻ᵀ: solve L yᵀ = xᵀ row by row
		for col := 0; col < d; col++ {
			v := x[r*d+col]
			for k := 0; k < col; k++ {
				v -= float64(Lc[col*d+k] * y[r*d+k])
			}
			y[r*d+col] = v / Lc[col*d+col]
		}
	}
	for r := 0; r < d; r++ {
		for col := 0; col < d; col++ {
			var v float64
			for k := col; k <= r; k++ { // (L Φ)[r][col] = Σ_{k ≥ col} L[r][k] Φ[k][col]
				phi := y[k*d+col]
				if k == col {
					phi /= 2
				}
				v += float64(Lc[r*d+k] * phi)
			}
			mo.chol[r*d+col] = v
		}
	}
	for k := 0; k < d; k++ {
		mo.sd[k] = dPsi[k*d+k] / (2 * law.sd[k])
	}
	return mo, nil
}

// frameMotion returns dA, the motion of the grid's axes (axisFrame) as Σ
// moves by dSigma.
func frameMotion(axes Axes, sigma, dSigma, frame []float64, d int) ([]float64, error) {
	dA := make([]float64, d*d)
	if axes == AxesCoordinate {
		for k := 0; k < d; k++ {
			dA[k*d+k] = dSigma[k*d+k] / (2 * math.Sqrt(sigma[k*d+k]))
		}
		return dA, nil
	}
	// Column k of the frame is √λ_k v_k (signed as axisFrame chose).
	lam := make([]float64, d)
	v := make([]float64, d*d) // column k: v_k
	for k := 0; k < d; k++ {
		var s float64
		for r := 0; r < d; r++ {
			s += float64(frame[r*d+k] * frame[r*d+k])
		}
		lam[k] = s
		for r := 0; r < d; r++ {
			v[r*d+k] = frame[r*d+k] / math.Sqrt(s)
		}
	}
	quad := func(a, b int) float64 { // v_aᵀ dΣ v_b
		var s float64
		for r := 0; r < d; r++ {
			for c := 0; c < d; c++ {
				s += float64(v[r*d+a] * dSigma[r*d+c] * v[c*d+b])
			}
		}
		return s
	}
	for k := 0; k < d; k++ {
		dl := quad(k, k)
		root := math.Sqrt(lam[k])
		for r := 0; r < d; r++ {
			dA[r*d+k] = float64(dl / (2 * root) * v[r*d+k])
		}
		for l := 0; l < d; l++ {
			if l == k {
				continue
			}
			gap := lam[k] - lam[l]
			if math.Abs(gap) <= 1e-9*math.Max(lam[k], lam[l]) {
				return nil, fmt.Errorf("%w: principal axes at a repeated eigenvalue of the stationary covariance (%g, %g); use axes: coordinate", ErrNotDifferentiable, lam[k], lam[l])
			}
			w := quad(l, k) / gap
			for r := 0; r < d; r++ {
				dA[r*d+k] += float64(root * w * v[r*d+l])
			}
		}
	}
	return dA, nil
}

// vectorRowSens differentiates the maxent rows of a VAR chain along one
// parameter whose motion is mo, into dTrans (n×n); see Sensitivity.
func vectorRowSens(grid, logW []float64, law gaussianVectorLaw, L int, trans []float64, keep *rowMultipliers, mo varMotion, dTrans []float64) {
	d, n := law.d, len(logW)
	full := vectorMomentCount(L, d)
	logq := make([]float64, n)
	allDev := make([]float64, n*full)
	e, z := make([]float64, d), make([]float64, d)
	de, dz, du := make([]float64, d), make([]float64, d), make([]float64, d)
	dlogq := make([]float64, n)
	dDev := make([]float64, n*full)
	dev := make([]float64, n*full)
	abar := make([]float64, n)
	grad := make([]float64, full)
	hess := make([]float64, full*full)
	chol := make([]float64, full*full)
	dlam := make([]float64, full)
	for i := 0; i < n; i++ {
		if keep.mirror[i] >= 0 {
			continue
		}
		law.fillState(i, grid, logW, L, logq, allDev, e, z)
		m, dm := law.means[i*d:(i+1)*d], mo.means[i*d:(i+1)*d]
		for j := 0; j < n; j++ {
			x, dx := grid[j*d:(j+1)*d], mo.grid[j*d:(j+1)*d]
			for k := 0; k < d; k++ {
				e[k] = x[k] - m[k]
				de[k] = dx[k] - dm[k]
			}
			for r := 0; r < d; r++ { // L z = e and L dz = de − dL z
				s := e[r]
				for c := 0; c < r; c++ {
					s -= float64(law.chol[r*d+c] * z[c])
				}
				z[r] = s / law.chol[r*d+r]
			}
			var dq float64
			for r := 0; r < d; r++ {
				s := de[r]
				for c := 0; c <= r; c++ {
					s -= float64(mo.chol[r*d+c] * z[c])
				}
				for c := 0; c < r; c++ {
					s -= float64(law.chol[r*d+c] * dz[c])
				}
				dz[r] = s / law.chol[r*d+r]
				dq += float64(z[r] * dz[r])
			}
			dlogq[j] = -dq
			for k := 0; k < d; k++ {
				u := e[k] / law.sd[k]
				du[k] = de[k]/law.sd[k] - u*mo.sd[k]/law.sd[k]
			}
			row := dDev[j*full : (j+1)*full]
			col := copy(row, dz[:min(d, full)])
			if L >= 2 {
				for k := 0; k < d; k++ {
					for l := k; l < d; l++ {
						row[col] = float64(dz[k]*z[l]) + float64(z[k]*dz[l])
						col++
					}
				}
			}
			if L >= 3 {
				for k := 0; k < d; k++ {
					u := e[k] / law.sd[k]
					row[col] = float64(3 * u * u * du[k])
					col++
				}
			}
			if L >= 4 {
				for k := 0; k < d; k++ {
					u := e[k] / law.sd[k]
					row[col] = float64(4 * u * u * u * du[k])
					col++
				}
			}
		}
		lam := keep.lam[i]
		cols := len(lam)
		p := trans[i*n : (i+1)*n]
		// The level's moment functions are the first cols of the full set.
		for j := 0; j < n; j++ {
			copy(dev[j*cols:(j+1)*cols], allDev[j*full:j*full+cols])
		}
		var ebar float64
		for j := 0; j < n; j++ {
			a := dlogq[j]
			for k := 0; k < cols; k++ {
				a += float64(lam[k] * dDev[j*full+k])
			}
			abar[j] = a
			ebar += float64(p[j] * a)
		}
		if cols > 0 {
			covariance(p, dev[:n*cols], cols, grad, hess)
			for k := 0; k < cols; k++ {
				if keep.regH[i] != nil {
					hess[k*cols+k] += keep.regH[i][k]
				}
			}
			if !cholesky(hess[:cols*cols], chol[:cols*cols], cols) {
				regularizeCholesky(hess[:cols*cols], chol[:cols*cols], cols)
			}
			clear(grad[:cols])
			for j := 0; j < n; j++ {
				w := float64(p[j] * (abar[j] - ebar))
				for k := 0; k < cols; k++ {
					grad[k] += float64(w*dev[j*cols+k]) + float64(p[j]*dDev[j*full+k])
				}
			}
			cholSolve(chol[:cols*cols], cols, grad[:cols], dlam[:cols])
			ebar = 0
			for j := 0; j < n; j++ {
				var s float64
				for k := 0; k < cols; k++ {
					s += float64(dlam[k] * dev[j*cols+k])
				}
				abar[j] -= s
				ebar += float64(p[j] * abar[j])
			}
		}
		out := dTrans[i*n : (i+1)*n]
		for j := 0; j < n; j++ {
			if p[j] == 0 {
				out[j] = 0
				continue
			}
			out[j] = float64(p[j] * (abar[j] - ebar))
		}
	}
	for i := 0; i < n; i++ {
		if k := keep.mirror[i]; k >= 0 {
			mirrorRow(dTrans[i*n:(i+1)*n], dTrans[k*n:(k+1)*n])
		}
	}
}
