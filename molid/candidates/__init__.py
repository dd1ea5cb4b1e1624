"""Candidates: the substance library, per-candidate real-gas evaluation, verdicts and ranking."""
