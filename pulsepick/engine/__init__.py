"""Engines that evaluate circuits: ``fast`` (closed forms and quadrature, vectorised)
and ``reference`` (transient simulation with scipy's solve_ivp), plus ``environment``
which resolves chips and parts at a supply into the arrays both engines use."""
