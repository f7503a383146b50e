"""The invented demo scenario (invoices of a wholesale supplier) and its generator."""
