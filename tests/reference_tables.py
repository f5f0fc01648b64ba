"""Reference values shared by several test files (one copy, one source).

methods.md section 7 [DER], coupled flexure-shear (parallel, wall-frame) cantilever, Miranda &
Taghavi (2005) form: alpha = H sqrt(GA/EI) -> (gamma_1, gamma_2, gamma_3), with
omega_n = gamma_n^2 sqrt(EI / (m H^4)); alpha = 0 is the Euler-Bernoulli cantilever
(Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1). By the Vlasov analogy the
same table holds for warping torsion with EI -> E C_w, GA -> GJ, m -> j_m.
"""

PARALLEL_GAMMA = {
    0.0: (1.8751, 4.6941, 7.8548),
    0.5: (1.9174, 4.7135, 7.8647),
    1.0: (2.0274, 4.7704, 7.8943),
    2.0: (2.3283, 4.9775, 8.0095),
    3.0: (2.6307, 5.2676, 8.1907),
    5.0: (3.1564, 5.9347, 8.6964),
    10.0: (4.1965, 7.5166, 10.2714),
    20.0: (5.7585, 10.0813, 13.2776),
}
