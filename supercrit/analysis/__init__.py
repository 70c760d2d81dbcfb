"""Path analysis: boundary crossings along each step, margins and verdicts."""
