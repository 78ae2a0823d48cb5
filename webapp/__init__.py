"""The glowtemp web app (Flask)."""
