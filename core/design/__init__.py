"""Design: inverting the model over the drawer's networks: search, trim and what to buy."""
