"""The functional sanity report: how candidate functionals do on the elements of a planned big run.

>>> from ks1d.report import functional_report
>>> out = functional_report(["Fe", "O"], functionals=["pbe", "pbe0"], basis="def2-tzvp")  # doctest: +SKIP
>>> out.paths["html"]                                                                    # doctest: +SKIP
'ks1d-report.html'
"""
from ..structure import Structure, StructureError, read_structure
from .plan import DEFAULT_FUNCTIONALS, ReportPlan, plan_report
from .run import ReportOutcome, functional_report

__all__ = ["DEFAULT_FUNCTIONALS", "ReportOutcome", "ReportPlan", "Structure", "StructureError",
           "functional_report", "plan_report", "read_structure"]
