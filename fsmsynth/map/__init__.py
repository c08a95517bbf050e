"""Multi-level logic and technology mapping, one way from stage to stage:

two-level covers ─factor.py→ factored forms (:class:`~fsmsynth.map.expr.Expr`)
─subject.py→ subject graph of 2-input NANDs and inverters ─cells.py / luts.py→ mapped
cells, or ─pterms.py→ a product-term array fitted from the covers directly.
:mod:`fsmsynth.map.realize` joins a design's covers, flip-flops and a target into a mapped
netlist; :mod:`fsmsynth.map.targets` says what a target has.
"""
