"""Second-order cone programs assembled for clarabel, called directly.

Standard form: minimise 1/2 z'Pz + q'z subject to A z + s = b, s in K, K a product of the zero
cone, the non-negative orthant and second-order cones. Blocks are collected as dense rows and
assembled once into CSC matrices.

References
----------
P. J. Goulart and Y. Chen, "Clarabel: An interior-point solver for conic programs with
quadratic objectives," arXiv:2405.12762 (2024).
"""

from __future__ import annotations

import time

import numpy as np

from ..errors import SteradianError

__all__ = ["ConicProgram", "SolverFailure", "Infeasible"]


class SolverFailure(SteradianError):
    """The conic solver stopped without a certified optimum."""

    def __init__(self, status: str, message: str):
        self.status = status
        super().__init__(message)


class Infeasible(SolverFailure):
    """The solver certified that no weights meet the constraints."""


_OK = {"Solved"}
_ALMOST = {"AlmostSolved"}
_INFEASIBLE = {"PrimalInfeasible", "AlmostPrimalInfeasible"}


class ConicProgram:
    """Collects constraint blocks over ``nvar`` real variables."""

    def __init__(self, nvar: int):
        self.nvar = int(nvar)
        self._zero_A: list[np.ndarray] = []
        self._zero_b: list[np.ndarray] = []
        self._nn_A: list[np.ndarray] = []
        self._nn_b: list[np.ndarray] = []
        self._soc: list[tuple[np.ndarray, np.ndarray, int]] = []  # (A (m*k, n), b, k)

    def zero(self, A, b) -> None:
        """A z = b."""
        A = np.atleast_2d(np.asarray(A, float))
        self._zero_A.append(A)
        self._zero_b.append(np.broadcast_to(np.asarray(b, float), (A.shape[0],)).copy())

    def leq(self, G, h) -> None:
        """G z <= h."""
        G = np.atleast_2d(np.asarray(G, float))
        if G.shape[0] == 0:
            return
        self._nn_A.append(G)
        self._nn_b.append(np.broadcast_to(np.asarray(h, float), (G.shape[0],)).copy())

    def socs(self, t_rows, t_const, V) -> None:
        """Many cones ``||V_i z|| <= t_rows_i . z + t_const_i``.

        ``V`` has shape (m, k, n) (k-dimensional vectors), ``t_rows`` (m, n), ``t_const``
        (m,).
        """
        V = np.asarray(V, float)
        if V.shape[0] == 0:
            return
        m, k, n = V.shape
        blk = np.empty((m, k + 1, n))
        blk[:, 0, :] = -np.asarray(t_rows, float).reshape(m, n)
        blk[:, 1:, :] = -V
        b = np.zeros((m, k + 1))
        b[:, 0] = np.asarray(t_const, float).reshape(m)
        self._soc.append((blk.reshape(m * (k + 1), n), b.reshape(-1), k + 1))

    def solve(self, P=None, q=None, *, whiten=None, max_iter: int = 200):
        """Solve; returns (z, info). Raises Infeasible / SolverFailure.

        ``whiten`` (optional, (m, m)) substitutes the first m variables ``x = whiten @ y``
        before solving (and maps the solution back). With ``whiten = L^{-T}``, ``L L^T = Q``,
        a quadratic objective ``x^T Q x`` becomes ``|y|^2``: pass ``P`` already transformed
        (the identity block), which keeps the KKT system sparse and better conditioned.
        """
        import clarabel
        import scipy.sparse as sp

        n = self.nvar
        blocks, rhs, cones = [], [], []
        if self._zero_A:
            A = np.vstack(self._zero_A)
            blocks.append(A)
            rhs.append(np.concatenate(self._zero_b))
            cones.append(clarabel.ZeroConeT(A.shape[0]))
        if self._nn_A:
            A = np.vstack(self._nn_A)
            blocks.append(A)
            rhs.append(np.concatenate(self._nn_b))
            cones.append(clarabel.NonnegativeConeT(A.shape[0]))
        for A, b, k in self._soc:
            blocks.append(A)
            rhs.append(b)
            cones.extend([clarabel.SecondOrderConeT(k)] * (A.shape[0] // k))
        Afull = np.vstack(blocks)
        if whiten is not None:
            m = whiten.shape[0]
            Afull[:, :m] = Afull[:, :m] @ whiten
        Amat = sp.csc_matrix(Afull)
        bvec = np.concatenate(rhs)
        Pm = sp.csc_matrix((n, n)) if P is None else sp.csc_matrix(np.triu(P))
        qv = np.zeros(n) if q is None else np.asarray(q, float)
        st = clarabel.DefaultSettings()
        st.verbose = False
        st.max_iter = int(max_iter)
        st.direct_solve_method = "faer"
        t0 = time.perf_counter()
        sol = clarabel.DefaultSolver(Pm, qv, Amat, bvec, cones, st).solve()
        elapsed = time.perf_counter() - t0
        status = str(sol.status).split(".")[-1]
        info = {"status": status, "iterations": int(sol.iterations),
                "primal_objective": float(sol.obj_val),
                "dual_objective": float(sol.obj_val_dual), "seconds": elapsed,
                "constraints": int(Amat.shape[0]), "variables": n}
        den = max(abs(info["primal_objective"]), abs(info["dual_objective"]), 1e-300)
        info["relative_gap"] = abs(info["primal_objective"] - info["dual_objective"]) / den
        if status in _INFEASIBLE:
            raise Infeasible(status, f"the solver certified the problem infeasible ({status})")
        if status not in _OK | _ALMOST:
            raise SolverFailure(status, f"the conic solver stopped without an optimum "
                                        f"({status} after {info['iterations']} iterations)")
        z = np.array(sol.x)
        if whiten is not None:
            z[: whiten.shape[0]] = whiten @ z[: whiten.shape[0]]
        return z, info
