"""Headless build of calculation records, the ledger, verification."""
