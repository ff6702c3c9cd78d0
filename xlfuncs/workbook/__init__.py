"""Headless workbooks: recalculation (``recalc``) and batch runs (``run_batch``)."""

from .batch import BatchReport, run_batch
from .recalc import PreparedBook, RecalcReport, recalc

__all__ = ["BatchReport", "PreparedBook", "RecalcReport", "recalc", "run_batch"]
