"""Running a plan: each step's surface, the solver choice, the engine and the assessment of its outcomes."""
