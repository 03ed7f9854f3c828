//! The case description: what a run needs, read from RON, validated, turned into particles.
