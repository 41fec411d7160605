"""Finite model search over SAT: flattening (:mod:`.flatten`), grounding and
encoding with symmetry breaking (:mod:`.encode`), the resumable search
(:mod:`.search`) and the display of a model (:mod:`.display`)."""
