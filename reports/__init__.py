"""Customer-facing documents: test certificates and intake receipts."""
