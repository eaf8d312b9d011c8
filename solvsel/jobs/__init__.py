"""The jobs layer: one module per thing a user asks, each a frozen request and a frozen result."""
