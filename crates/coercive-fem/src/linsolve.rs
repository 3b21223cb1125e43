//! Sparse direct solvers on faer: Cholesky (AMD ordering, symbolic analysis shared through an
//! `Arc`, numeric refactorisation per Newton step) and LU (COLAMD, partial pivoting) for
//! non-symmetric tangents.
//!
//! The Cholesky path runs faer sequentially (`Par::Seq`) so that results do not depend on the
//! number of threads.

use std::sync::Arc;

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::cholesky::llt::factor::LltRegularization;
use faer::linalg::solvers::SolveCore;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, SymbolicCholesky, SymmetricOrdering,
};
use faer::sparse::linalg::solvers::{Lu, SymbolicLu};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side};

use crate::assembly::Pattern;
use crate::FemError;

/// The linear solver used inside Newton's method.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LinearSolverKind {
    /// Sparse Cholesky with an approximate-minimum-degree ordering (symmetric tangents: every
    /// material law implemented today).
    #[default]
    Cholesky,
    /// Sparse LU with a column approximate-minimum-degree ordering and partial pivoting
    /// (non-symmetric tangents; about 5x slower and 4x the memory).
    Lu,
}

/// The symbolic analysis of a pattern, shared by every factorisation on it.
#[derive(Clone, Debug)]
pub(crate) enum Symbolic {
    Cholesky(Arc<SymbolicCholesky<u32>>),
    Lu(SymbolicLu<u32>),
}

fn symbolic_view(p: &Pattern) -> SymbolicSparseColMatRef<'_, u32> {
    SymbolicSparseColMatRef::new_checked(p.neq, p.neq, &p.col_ptr, None, &p.row_idx)
}

impl Symbolic {
    /// Analyses `pattern` (upper triangle for Cholesky, full for LU).
    pub fn new(pattern: &Pattern, kind: LinearSolverKind) -> Result<Symbolic, FemError> {
        let err = |e: faer::sparse::FaerError| FemError::Factorisation {
            reason: format!("{e:?}"),
        };
        match kind {
            LinearSolverKind::Cholesky => {
                debug_assert!(pattern.upper_only);
                let s = factorize_symbolic_cholesky(
                    symbolic_view(pattern),
                    Side::Upper,
                    SymmetricOrdering::Amd,
                    Default::default(),
                )
                .map_err(err)?;
                Ok(Symbolic::Cholesky(Arc::new(s)))
            }
            LinearSolverKind::Lu => {
                debug_assert!(!pattern.upper_only);
                Ok(Symbolic::Lu(
                    SymbolicLu::try_new(symbolic_view(pattern)).map_err(err)?,
                ))
            }
        }
    }

    /// Entries of the factor (Cholesky), a measure of its memory (8 bytes each).
    pub fn factor_entries(&self) -> Option<usize> {
        match self {
            Symbolic::Cholesky(s) => Some(s.len_val()),
            Symbolic::Lu(_) => None,
        }
    }
}

/// A numeric factorisation with its reusable storage.
pub(crate) struct Factor {
    symbolic: Symbolic,
    l_values: Vec<f64>,
    lu: Option<Lu<u32, f64>>,
    scratch: MemBuffer,
}

/// A factorisation failure: the equation (original numbering) of the failed pivot, if known.
pub(crate) enum FactorError {
    Pivot(usize),
    Other(String),
}

impl Factor {
    /// Storage for factorisations sharing `symbolic`.
    pub fn new(symbolic: &Symbolic) -> Result<Factor, FemError> {
        let (len, scratch) = match symbolic {
            Symbolic::Cholesky(s) => (
                s.len_val(),
                StackReq::any_of(&[
                    s.factorize_numeric_llt_scratch::<f64>(Par::Seq, Default::default()),
                    s.solve_in_place_scratch::<f64>(1, Par::Seq),
                ]),
            ),
            Symbolic::Lu(_) => (0, StackReq::EMPTY),
        };
        let mut l_values = Vec::new();
        l_values
            .try_reserve_exact(len)
            .map_err(|_| FemError::Factorisation {
                reason: format!("out of memory for a factor of {len} entries"),
            })?;
        l_values.resize(len, 0.0);
        let scratch = MemBuffer::try_new(scratch).map_err(|_| FemError::Factorisation {
            reason: "out of memory for the factorisation workspace".into(),
        })?;
        Ok(Factor {
            symbolic: symbolic.clone(),
            l_values,
            lu: None,
            scratch,
        })
    }

    /// Factorises the matrix with `pattern` and `values`.
    pub fn factorise(&mut self, pattern: &Pattern, values: &[f64]) -> Result<(), FactorError> {
        let mat = SparseColMatRef::new(symbolic_view(pattern), values);
        match &self.symbolic {
            Symbolic::Cholesky(s) => {
                let res = s.factorize_numeric_llt::<f64>(
                    &mut self.l_values,
                    mat,
                    Side::Upper,
                    LltRegularization {
                        dynamic_regularization_delta: 0.0,
                        dynamic_regularization_epsilon: 0.0,
                    },
                    Par::Seq,
                    MemStack::new(&mut self.scratch),
                    Default::default(),
                );
                match res {
                    Ok(_) => Ok(()),
                    Err(faer::linalg::solvers::LltError::NonPositivePivot { index }) => {
                        let original = match s.perm() {
                            Some(p) => p.arrays().0[index] as usize,
                            None => index,
                        };
                        Err(FactorError::Pivot(original))
                    }
                }
            }
            Symbolic::Lu(s) => {
                let lu = Lu::try_new_with_symbolic(s.clone(), mat)
                    .map_err(|e| FactorError::Other(format!("{e:?}")))?;
                self.lu = Some(lu);
                Ok(())
            }
        }
    }

    /// Solves in place with the last factorisation.
    pub fn solve_in_place(&mut self, rhs: &mut [f64]) {
        let n = rhs.len();
        let rhs_mat = MatMut::from_column_major_slice_mut(rhs, n, 1);
        match &self.symbolic {
            Symbolic::Cholesky(s) => {
                faer::sparse::linalg::cholesky::LltRef::<'_, u32, f64>::new(s, &self.l_values)
                    .solve_in_place_with_conj(
                        Conj::No,
                        rhs_mat,
                        Par::Seq,
                        MemStack::new(&mut self.scratch),
                    );
            }
            Symbolic::Lu(_) => {
                if let Some(lu) = &self.lu {
                    lu.solve_in_place_with_conj(Conj::No, rhs_mat);
                }
            }
        }
    }
}
