//! The modified nodal system one Newton step assembles: the residual (the current leaving each free node,
//! then each device's own constraint equations) and its Jacobian, dense and row-major, with a dense LU
//! solve. Device models write into it through [`Stamp`], so none of them knows how unknowns are numbered.
//!
//! Unknowns are the voltages of the nodes that are not rails, followed by the extra unknowns devices ask
//! for (the current in a voltage-defined branch: a fixed VBE, a saturated VCE, an op-amp's output). Rails
//! and ground are known voltages, scaled by the source-stepping factor.

/// Marks a node whose voltage is known (a rail or ground) rather than an unknown.
pub(crate) const FIXED: usize = usize::MAX;

/// A point of the unknowns, read as node voltages and extra unknowns.
#[derive(Clone, Copy)]
pub(crate) struct View<'a> {
    /// The value of every unknown.
    pub x: &'a [f64],
    /// For each node, its unknown's index, or [`FIXED`].
    pub var: &'a [usize],
    /// For each node, its known voltage (only read for fixed nodes), already scaled by source stepping.
    pub fixed: &'a [f64],
}

impl View<'_> {
    /// The voltage of a node.
    #[inline]
    pub fn v(&self, node: usize) -> f64 {
        let k = self.var[node];
        if k == FIXED {
            self.fixed[node]
        } else {
            self.x[k]
        }
    }

    /// The value of an extra unknown.
    #[inline]
    pub fn extra(&self, e: usize) -> f64 {
        self.x[e]
    }
}

/// The residual and Jacobian being assembled, with the point they are assembled at.
pub(crate) struct Stamp<'a> {
    /// The point.
    pub at: View<'a>,
    /// The source-stepping factor: 1 for the real circuit.
    pub lambda: f64,
    /// Residuals: current leaving each free node, then each extra equation.
    pub f: &'a mut [f64],
    /// The sum of the magnitudes of every current written into each row: what a node's residual is
    /// measured against.
    pub scale: &'a mut [f64],
    /// The rounding floor of each row's residual: the currents' uncertainty from node voltages held in
    /// doubles.
    pub floor: &'a mut [f64],
    /// The Jacobian, `n × n`, row-major.
    pub jac: &'a mut [f64],
    /// The number of unknowns.
    pub n: usize,
    /// The largest rail's magnitude (at least 1 V): the scale of a solve's rounding in node voltages.
    pub volts_scale: f64,
}

impl Stamp<'_> {
    /// The voltage of a node at the current guess.
    #[inline]
    pub fn v(&self, node: usize) -> f64 {
        self.at.v(node)
    }

    /// The value of an extra unknown.
    #[inline]
    pub fn extra(&self, e: usize) -> f64 {
        self.at.x[e]
    }

    /// Current `i` leaves `node` into the device.
    #[inline]
    pub fn leave(&mut self, node: usize, i: f64) {
        let k = self.at.var[node];
        if k != FIXED {
            self.f[k] += i;
            self.scale[k] += i.abs();
        }
    }

    /// ∂(current leaving `row`)/∂V(`col`).
    #[inline]
    pub fn d(&mut self, row: usize, col: usize, g: f64) {
        let (r, c) = (self.at.var[row], self.at.var[col]);
        if r != FIXED && c != FIXED {
            self.jac[r * self.n + c] += g;
        }
    }

    /// ∂(current leaving `row`)/∂(extra unknown `e`).
    #[inline]
    pub fn d_extra(&mut self, row: usize, e: usize, g: f64) {
        let r = self.at.var[row];
        if r != FIXED {
            self.jac[r * self.n + e] += g;
        }
    }

    /// A two-terminal branch: current `i` from `a` to `b`, with slope `g` = ∂i/∂(Va − Vb).
    #[inline]
    pub fn branch(&mut self, a: usize, b: usize, i: f64, g: f64) {
        self.leave(a, i);
        self.leave(b, -i);
        // The current is only defined to g·ε·|V| by node voltages held in doubles (and a solve's rounding
        // reaches every node at the scale of the largest rail): its rounding floor.
        let floor = g.abs() * f64::EPSILON * (self.v(a).abs() + self.v(b).abs() + self.volts_scale);
        for node in [a, b] {
            let k = self.at.var[node];
            if k != FIXED {
                self.floor[k] += floor;
            }
        }
        self.d(a, a, g);
        self.d(a, b, -g);
        self.d(b, a, -g);
        self.d(b, b, g);
    }

    /// Adds `value` to the residual of the extra equation `e`.
    #[inline]
    pub fn eq(&mut self, e: usize, value: f64) {
        self.f[e] += value;
        self.scale[e] += value.abs();
        // A constraint between node voltages is only met to the rounding of those voltages.
        self.floor[e] += 4.0 * f64::EPSILON * self.volts_scale;
    }

    /// ∂(extra equation `e`)/∂V(`col`).
    #[inline]
    pub fn eq_d(&mut self, e: usize, col: usize, g: f64) {
        let c = self.at.var[col];
        if c != FIXED {
            self.jac[e * self.n + c] += g;
        }
    }

    /// ∂(extra equation `e`)/∂(extra unknown `k`).
    #[inline]
    pub fn eq_d_extra(&mut self, e: usize, k: usize, g: f64) {
        self.jac[e * self.n + k] += g;
    }

    /// An extra unknown this region does not use: the equation `x_e = 0` keeps the system square.
    #[inline]
    pub fn unused(&mut self, e: usize) {
        let x = self.at.x[e];
        self.eq(e, x);
        self.eq_d_extra(e, e, 1.0);
    }
}

/// Scratch space for [`lu_solve`], kept between solves so a Newton step does not allocate.
#[derive(Clone, Debug, Default)]
pub(crate) struct LuScratch {
    rows: Vec<usize>,
    singular: Vec<bool>,
    out: Vec<f64>,
}

/// Solves `a · dx = b` in place by LU with partial pivoting (`a` is destroyed, `b` becomes `dx`).
///
/// A pivot that is exactly zero belongs to an unknown nothing pins down (a collector node that only a
/// cut-off transistor touches): its step is set to zero rather than failing, and the caller's residual
/// check says whether the rest is a solution.
pub(crate) fn lu_solve(a: &mut [f64], b: &mut [f64], n: usize, s: &mut LuScratch) {
    s.rows.clear();
    s.rows.extend(0..n);
    s.singular.clear();
    s.singular.resize(n, false);
    s.out.clear();
    s.out.resize(n, 0.0);
    let rows = &mut s.rows;
    for k in 0..n {
        let mut p = k;
        let mut best = a[rows[k] * n + k].abs();
        for (i, &row) in rows.iter().enumerate().skip(k + 1) {
            let v = a[row * n + k].abs();
            if v > best {
                best = v;
                p = i;
            }
        }
        rows.swap(k, p);
        let pk = rows[k];
        let pivot = a[pk * n + k];
        if pivot == 0.0 || !pivot.is_finite() {
            s.singular[k] = true;
            continue;
        }
        for &row in rows.iter().skip(k + 1) {
            let factor = a[row * n + k] / pivot;
            if factor != 0.0 {
                for j in k + 1..n {
                    a[row * n + j] -= factor * a[pk * n + j];
                }
                b[row] -= factor * b[pk];
            }
        }
    }
    for k in (0..n).rev() {
        if s.singular[k] {
            s.out[k] = 0.0;
            continue;
        }
        let pk = rows[k];
        let mut acc = b[pk];
        for j in k + 1..n {
            acc -= a[pk * n + j] * s.out[j];
        }
        s.out[k] = acc / a[pk * n + k];
    }
    b.copy_from_slice(&s.out);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lu_solves_a_small_system() {
        // 2x + y = 5, x + 3y = 10 → x = 1, y = 3 (hand arithmetic).
        let mut a = vec![2.0, 1.0, 1.0, 3.0];
        let mut b = vec![5.0, 10.0];
        lu_solve(&mut a, &mut b, 2, &mut LuScratch::default());
        assert!(
            (b[0] - 1.0).abs() < 1e-15 && (b[1] - 3.0).abs() < 1e-15,
            "{b:?}"
        );
    }

    #[test]
    fn lu_needs_pivoting_and_survives_a_zero_row() {
        // The first pivot is zero; the third unknown appears nowhere and gets a zero step.
        let mut a = vec![0.0, 1.0, 0.0, 1.0, 1.0, 0.0, 0.0, 0.0, 0.0];
        let mut b = vec![2.0, 3.0, 0.0];
        lu_solve(&mut a, &mut b, 3, &mut LuScratch::default());
        assert_eq!(b, vec![1.0, 2.0, 0.0]);
    }
}
