"""Writes for clients, sessions and plans (HackSoft-style services), one module per subject."""
