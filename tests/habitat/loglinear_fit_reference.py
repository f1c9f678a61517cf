#!/usr/bin/python3
"""Reference values for tests/habitat/loglinear_fit_test.cpp: a Poisson GLM (statsmodels,
Debian's python3-statsmodels) on the cell-wise likelihood of a point pattern over raster
cells. Counts n_c of sightings in cell c, log link, offset log(area_c): its log-likelihood
differs from the point-process one only by terms free of the coefficients, so the
coefficients and their standard errors must agree. Invented design (no field data):
12 cells of a 3 x 4 raster clipped to a plot, two covariates (moisture index, elevation
in 100 m)."""
import numpy as np
import statsmodels.api as sm

area = np.array([400, 400, 400, 250, 400, 400, 400, 310, 400, 400, 120, 55], dtype=float)  # m2
moisture = np.array([0.12, 0.35, 0.51, 0.77, 0.20, 0.44, 0.63, 0.91, 0.05, 0.29, 0.58, 0.83])
elevation = np.array([3.10, 3.05, 2.98, 2.91, 3.22, 3.14, 3.02, 2.95, 3.31, 3.20, 3.08, 2.99])
counts = np.array([1, 3, 4, 6, 0, 2, 5, 7, 0, 1, 2, 1], dtype=float)

X = sm.add_constant(np.column_stack([moisture, elevation]))
fit = sm.GLM(counts, X, family=sm.families.Poisson(), offset=np.log(area)).fit(tol=1e-14, maxiter=200)
np.set_printoptions(precision=17)
print("coefficients", repr(fit.params))
print("standard errors", repr(fit.bse))
# The point-process log-likelihood sum_i eta(x_i) - sum_c a_c exp(eta_c) at the optimum.
eta = X @ fit.params
print("point-process log-likelihood", repr(float(counts @ eta - area @ np.exp(eta))))
