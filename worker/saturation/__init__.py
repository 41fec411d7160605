"""The saturation engine: a given-clause loop over the superposition calculus.

Modules: :mod:`clause` (clauses with their derivation), :mod:`kbo` (the
Knuth-Bendix ordering), :mod:`unify` (unification and matching),
:mod:`index` (term indexes), :mod:`rules` (inference and simplification
rules), :mod:`loop` (the given-clause loop and its limits), :mod:`proof`
(proof extraction and printing), :mod:`strategy` (options and named
strategies).
"""
