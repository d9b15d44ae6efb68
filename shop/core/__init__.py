"""Shared plumbing for every app: the error shape, pagination, versioning and permissions."""
