"""Evaluation: bind a schedule to a rule pack, run the procedures, produce findings and trails."""
