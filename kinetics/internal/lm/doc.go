// Package lm minimises a sum of squares by the Levenberg–Marquardt
// method, with optional box bounds. It is the minimiser of kinetics.Fit and
// is internal to kinetics.
//
// # Problem
//
// Given m residuals r(x) of n parameters and their Jacobian J = ∂r/∂x,
// Minimize looks for a local minimum of the cost
//
//	F(x) = ½·Σ rᵢ(x)²
//
// inside the box lo ≤ x ≤ hi (no bounds by default).
//
// # Algorithm
//
// Each iteration solves the damped normal equations, with Marquardt's
// scaling of the damping by the diagonal of JᵀJ,
//
//	(JᵀJ + λ·D)·h = −Jᵀr,   D = diag(max(JᵀJ_jj, 10⁻¹²)),
//
// by a Cholesky factorisation, projects x + h onto the box and accepts the
// step when it lowers F. The gain ratio of the actual to the predicted
// reduction,
//
//	ρ = (F(x) − F(x_new)) / (L(0) − L(h)),  L(h) = ½·‖r + J·h‖²,
//
// updates the damping as Nielsen proposes: on acceptance
// λ ← λ·max(1/10, 1 − (2ρ − 1)³) (Nielsen's floor is 1/3; 1/10 lets a
// good quadratic model reach Gauss–Newton steps sooner) and ν ← 2; on
// rejection (or when the damped matrix is not positive definite)
// λ ← λ·ν and ν ← 2ν, up to 40 tries per iteration. Because the damping
// is scaled by D, λ is dimensionless and the start is λ₀ =
// Settings.InitialDamping itself (scale-invariant: multiplying the
// residuals or a parameter by a constant changes no step); the λ reached
// is returned in Result.Damping so a continuation can start from it.
//
// # Stopping rules
//
// With g = Jᵀr the gradient of F, the iteration stops with
//
//   - GradientConvergence when max_j |g_j| ≤ GradientTolerance·(1 + F);
//   - StepConvergence when a step has ‖Δx‖ ≤
//     StepTolerance·(‖x‖ + StepTolerance), accepted or not (a rejected
//     one that short: a larger λ would only shorten it further);
//   - CostConvergence when an accepted step lowers F, or a rejected one
//     raises it, by no more than CostTolerance·F, or F falls below 10⁻³⁰⁰;
//   - PrecisionLimit when no step lowers F but max_j |g_j| ≤
//     StallTolerance·(1 + F): a minimum to working precision;
//   - Stalled when no step lowers F and the gradient is not small;
//   - IterationLimit after MaxIterations iterations.
//
// The first four are convergence (Status.Converged). Not converging is a
// Status in the Result, never an error: the Result always holds the best
// point reached. Misuse (no residuals, a nil residual function, bounds of
// the wrong length or crossed) panics.
//
// References:
//
//   - K. Levenberg, "A method for the solution of certain non-linear
//     problems in least squares", Q. Appl. Math. 2, 164 (1944).
//   - D. W. Marquardt, "An algorithm for least-squares estimation of
//     nonlinear parameters", J. SIAM 11, 431 (1963).
//   - J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and
//     theory", in G. A. Watson (ed.), Numerical Analysis (Dundee 1977),
//     Springer LNM 630 (1978), 105–116.
//   - H. B. Nielsen, "Damping parameter in Marquardt's method", IMM-REP-
//     1999-05, Technical University of Denmark (1999).
//   - K. Madsen, H. B. Nielsen, O. Tingleff, "Methods for non-linear least
//     squares problems", 2nd ed., IMM, Technical University of Denmark
//     (2004), §3.2 (gain ratio and damping update).
//
// (Volume and page numbers from memory.)
package lm
