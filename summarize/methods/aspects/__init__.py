"""Aspect summaries: for one document, the few sentences that answer a named question."""
