"""One stage per arrow of the pipeline: state minimization (reduce), state assignment searches
(assign), encoding, excitation, registered outputs, equations and the gate netlist."""
