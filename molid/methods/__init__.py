"""Measurement methods: one module per method, and the registry every stage consults."""
