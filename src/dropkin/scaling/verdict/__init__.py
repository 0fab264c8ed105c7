"""The regime verdict: every candidate regime confronted with a fitted series,
ranked, and said in one sentence."""
