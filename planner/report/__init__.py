"""Back end: summaries, budgets, bill of materials, wiring, SPICE deck and reports."""

from .check import design_summary, stock_summary

__all__ = ["design_summary", "stock_summary"]
