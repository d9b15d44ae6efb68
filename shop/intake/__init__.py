"""Intake: customers, their units, repair jobs, job moves, repair steps and evidence."""
