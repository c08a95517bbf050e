"""Writers: model to text.  Each has one public entry point that returns a string; saving it
is the caller's business (:mod:`fsmsynth.flows.files` replaces files atomically).

* :func:`write_verilog`: the structural netlist as IEEE 1364-2005 Verilog;
* :func:`write_vhdl`: the same netlist as an IEEE 1076-2008 entity;
* :func:`write_rtl_verilog`, :func:`write_rtl_vhdl`: the machine as register-transfer-level
  HDL (:func:`rtl_machine` describes it: states, codes, branches, invariants);
* :func:`write_testbench`, :func:`write_vhdl_testbench`: self-checking benches from the table;
* :func:`write_cocotb_bench`: a cocotb test module (Python) for the same checks;
* :func:`write_json_netlist`: the netlist as JSON (ports, gates, flip-flops, cost);
* :func:`write_spec`: a table as a TOML spec (the guarded form where it says the same);
* :func:`write_state_diagram`, :func:`write_netlist_dot`: Graphviz DOT (:func:`render` runs
  ``dot`` on it);
* :func:`write_karnaugh`: a Karnaugh map of one function, as text.
"""

from fsmsynth.writers.cocotb_bench import write_cocotb_bench
from fsmsynth.writers.dot import render, write_netlist_dot, write_state_diagram
from fsmsynth.writers.json_netlist import write_json_netlist
from fsmsynth.writers.kmap import write_karnaugh
from fsmsynth.writers.rtl_machine import rtl_machine
from fsmsynth.writers.rtl_verilog import write_rtl_verilog
from fsmsynth.writers.rtl_vhdl import write_rtl_vhdl
from fsmsynth.writers.spec_toml import write_spec
from fsmsynth.writers.testbench import write_testbench
from fsmsynth.writers.verilog import write_verilog
from fsmsynth.writers.vhdl import write_vhdl, write_vhdl_testbench

__all__ = [
    "write_verilog", "write_vhdl", "write_testbench", "write_vhdl_testbench",
    "write_cocotb_bench", "write_json_netlist", "write_spec", "write_state_diagram",
    "write_netlist_dot", "write_karnaugh", "render", "write_rtl_verilog", "write_rtl_vhdl",
    "rtl_machine",
]
