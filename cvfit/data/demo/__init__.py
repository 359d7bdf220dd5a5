"""The bundled demo titration series (invented scenario, simulated by cvfit)."""
