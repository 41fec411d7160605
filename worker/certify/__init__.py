"""Independent certification of verdicts: the proof checker
(:mod:`worker.certify.proofcheck`) and the model evaluator
(:mod:`worker.certify.evaluate`).  Neither imports inference code from the
engine (worker.saturation) or the model search (worker.models)."""
