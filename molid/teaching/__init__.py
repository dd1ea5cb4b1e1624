"""Teaching: grading a section against a rubric, diagnosing classic mistakes, class plots."""
