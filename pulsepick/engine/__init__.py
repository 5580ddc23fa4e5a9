"""Engines that evaluate circuits: ``fast`` (closed forms and quadrature, vectorised)
and ``reference`` (transient simulation, integrated by ``dormand_prince``), plus
``environment``, which resolves chips and parts at a supply into the arrays both
engines use."""
