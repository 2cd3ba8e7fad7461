"""coveryield."""
