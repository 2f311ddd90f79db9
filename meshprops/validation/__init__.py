"""Validation: findings (data, never log lines), the checks, and the safe repairs."""
