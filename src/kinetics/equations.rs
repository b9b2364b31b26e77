//! The kinetics as diffsol equations: the model's right-hand side, its exact Jacobian-vector
//! product, and the analytic Jacobian ([`crate::model::jacobian`]) written straight into
//! diffsol's matrix, dense (nalgebra) or sparse (faer) from the same assembly. The sparse
//! pattern is the model's own, so diffsol neither probes nor colours.

use super::Event;
use crate::model::jacobian::Jacobian;
use crate::model::rhs::Rhs;
use diffsol::{
    ConstantOp, FaerSparseMat, Matrix, NalgebraMat, NonLinearOp, NonLinearOpJacobian, OdeEquations, OdeEquationsRef,
    Op, ParameterisedOp, UnitCallable, Vector,
};
use std::cell::RefCell;

/// A diffsol matrix type the analytic Jacobian can be written into.
pub(super) trait Backend: Matrix<T = f64> {
    /// The pattern as this matrix type states it (None for dense).
    fn pattern(jac: &Jacobian) -> Option<Self::Sparsity>;
    /// Write `values` (in the pattern's storage order) into `m`.
    fn write(jac: &Jacobian, values: &[f64], m: &mut Self);
}

impl Backend for NalgebraMat<f64> {
    fn pattern(_: &Jacobian) -> Option<Self::Sparsity> {
        None
    }
    fn write(jac: &Jacobian, values: &[f64], m: &mut Self) {
        let d = m.inner_mut();
        d.fill(0.0);
        let (cp, ri) = (jac.col_ptr(), jac.row_idx());
        for c in 0..jac.dim() {
            for k in cp[c]..cp[c + 1] {
                d[(ri[k], c)] = values[k];
            }
        }
    }
}

impl Backend for FaerSparseMat<f64> {
    fn pattern(jac: &Jacobian) -> Option<Self::Sparsity> {
        let n = jac.dim();
        Some(faer::sparse::SymbolicSparseColMat::new_checked(
            n,
            n,
            jac.col_ptr().to_vec(),
            None,
            jac.row_idx().to_vec(),
        ))
    }
    fn write(jac: &Jacobian, values: &[f64], m: &mut Self) {
        for block in m.inner_mut().iter_mut() {
            debug_assert_eq!(block.symbolic().row_idx(), jac.row_idx());
            block.val_mut().copy_from_slice(values);
        }
    }
}

/// The equations of one run.
pub(super) struct Equations<'a, 'm, M: Backend> {
    rhs: &'a Rhs<'m>,
    jac: &'a Jacobian,
    values: RefCell<Vec<f64>>,
    sparsity: Option<M::Sparsity>,
    y0: &'a [f64],
    event: Option<Event>,
    ctx: M::C,
}

impl<'a, 'm, M: Backend> Equations<'a, 'm, M> {
    /// Equations for `rhs` from `y0`, with an optional stop `event`.
    pub(super) fn new(rhs: &'a Rhs<'m>, jac: &'a Jacobian, y0: &'a [f64], event: Option<Event>) -> Self {
        let ctx = M::C::default();
        Equations {
            rhs,
            jac,
            values: RefCell::new(vec![0.0; jac.nnz()]),
            sparsity: M::pattern(jac),
            y0,
            event,
            ctx,
        }
    }
}

macro_rules! op_common {
    () => {
        type T = f64;
        type V = M::V;
        type M = M;
        type C = M::C;
        fn context(&self) -> &Self::C {
            &self.eqn.ctx
        }
        fn nstates(&self) -> usize {
            self.eqn.y0.len()
        }
        fn nparams(&self) -> usize {
            0
        }
    };
}

impl<M: Backend> Op for Equations<'_, '_, M> {
    type T = f64;
    type V = M::V;
    type M = M;
    type C = M::C;
    fn context(&self) -> &Self::C {
        &self.ctx
    }
    fn nstates(&self) -> usize {
        self.y0.len()
    }
    fn nout(&self) -> usize {
        self.y0.len()
    }
    fn nparams(&self) -> usize {
        0
    }
}

/// The right-hand side with its Jacobian.
pub(super) struct RhsOp<'e, 'a, 'm, M: Backend> {
    eqn: &'e Equations<'a, 'm, M>,
}

impl<M: Backend> Op for RhsOp<'_, '_, '_, M> {
    op_common!();
    fn nout(&self) -> usize {
        self.eqn.y0.len()
    }
}

impl<M: Backend> NonLinearOp for RhsOp<'_, '_, '_, M> {
    fn call_inplace(&self, x: &M::V, _t: f64, y: &mut M::V) {
        y.for_each_batch_host([x], |y, [x], _| self.eqn.rhs.eval(x, y));
    }
}

impl<M: Backend> NonLinearOpJacobian for RhsOp<'_, '_, '_, M> {
    fn jac_mul_inplace(&self, x: &M::V, _t: f64, v: &M::V, y: &mut M::V) {
        y.for_each_batch_host([x, v], |y, [x, v], _| self.eqn.rhs.jac_vec(x, v, y));
    }
    fn jacobian_inplace(&self, x: &M::V, _t: f64, y: &mut M) {
        let x = x.clone_as_vec();
        let mut values = self.eqn.values.borrow_mut();
        self.eqn.jac.eval(self.eqn.rhs, &x, &mut values);
        M::write(self.eqn.jac, &values, y);
    }
    fn jacobian_sparsity(&self) -> Option<M::Sparsity> {
        self.eqn.sparsity.clone()
    }
}

/// The start state.
pub(super) struct InitOp<'e, 'a, 'm, M: Backend> {
    eqn: &'e Equations<'a, 'm, M>,
}

impl<M: Backend> Op for InitOp<'_, '_, '_, M> {
    op_common!();
    fn nout(&self) -> usize {
        self.eqn.y0.len()
    }
}

impl<M: Backend> ConstantOp for InitOp<'_, '_, '_, M> {
    fn call_inplace(&self, _t: f64, y: &mut M::V) {
        y.for_each_batch_host([], |y, [], _| y.copy_from_slice(self.eqn.y0));
    }
}

/// The stop condition: a species' concentration minus its level.
pub(super) struct RootOp<'e, 'a, 'm, M: Backend> {
    eqn: &'e Equations<'a, 'm, M>,
    event: Event,
}

impl<M: Backend> Op for RootOp<'_, '_, '_, M> {
    op_common!();
    fn nout(&self) -> usize {
        1
    }
}

impl<M: Backend> NonLinearOp for RootOp<'_, '_, '_, M> {
    fn call_inplace(&self, x: &M::V, _t: f64, y: &mut M::V) {
        let (i, level) = (self.event.species, self.event.level);
        y.for_each_batch_host([x], |y, [x], _| y[0] = x[i] - level);
    }
}

impl<'e, 'a, 'm, M: Backend> OdeEquationsRef<'e> for Equations<'a, 'm, M> {
    type Rhs = RhsOp<'e, 'a, 'm, M>;
    type Init = InitOp<'e, 'a, 'm, M>;
    type Mass = ParameterisedOp<'e, UnitCallable<M>>;
    type Root = RootOp<'e, 'a, 'm, M>;
    type Out = ParameterisedOp<'e, UnitCallable<M>>;
    type Reset = ParameterisedOp<'e, UnitCallable<M>>;
}

impl<'a, 'm, M: Backend> OdeEquations for Equations<'a, 'm, M> {
    fn rhs(&self) -> RhsOp<'_, 'a, 'm, M> {
        RhsOp { eqn: self }
    }
    fn init(&self) -> InitOp<'_, 'a, 'm, M> {
        InitOp { eqn: self }
    }
    fn mass(&self) -> Option<<Self as OdeEquationsRef<'_>>::Mass> {
        None
    }
    fn root(&self) -> Option<<Self as OdeEquationsRef<'_>>::Root> {
        self.event.map(|event| RootOp { eqn: self, event })
    }
    fn out(&self) -> Option<<Self as OdeEquationsRef<'_>>::Out> {
        None
    }
    fn set_params(&mut self, _p: &Self::V) {}
    fn get_params(&self, _p: &mut Self::V) {}
}
