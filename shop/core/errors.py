"""The single JSON error shape and the exception handler that produces it."""
