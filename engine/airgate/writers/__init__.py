"""Writers: turn a :class:`~airgate.evaluation.report.Report` into text, JSON or a trail."""
