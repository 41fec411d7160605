"""Finite model search over SAT: flattening and clause splitting
(:mod:`.flatten`), grounding and encoding with symmetry breaking
(:mod:`.encode`), the resumable search (:mod:`.search`), enumeration up to
isomorphism (:mod:`.enumerate`) and the display of a model (:mod:`.display`)."""
