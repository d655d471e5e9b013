"""One module per kind of unit; each takes inlet flows and its specification
and returns a ``common.UnitOutcome`` (outlets, heat, work, balance, details).

Each module has a pure function with explicit SI keyword arguments (e.g.
``valve.throttle(model, inlet, ambient_temperature=..., outlet_pressure=...)``)
and a thin ``solve(spec, inlets, model, ambient_temperature)`` that reads a
``thermo.spec.UnitSpec``. Outlets come back in the order of the unit's outlet
roles (``UnitSpec.outlet_streams``); inlets arrive in the order of its inlet
roles (``UnitSpec.inlet_streams``).

Adding a kind of unit:
1. its row in ``thermo.spec.UNIT_TYPES`` (connections and specification keys;
   the reader checks files against it);
2. a module here: compute the outlet states with the flashes, then return
   ``common.outcome(inlets, outlets, duty=..., power=..., ...)``, which works
   out entropy generation, lost work, the energy-balance residual and the
   three-step path; raise ``common.UnitError(message, key=..., fix=...)``
   for a specification that cannot be met;
3. register ``solve`` in ``thermo.flowsheet.UNIT_SOLVERS`` and its port
   counts in ``thermo.flowsheet._PORTS``;
4. any rule of its own in ``thermo.cautions`` (see there);
5. tests in ``tests/equipment/``: a hand calculation with the engine's own
   flashes and ``unit_helpers.assert_balanced`` (residual below 1e-6).
"""
