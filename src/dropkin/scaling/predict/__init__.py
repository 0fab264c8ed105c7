"""What a sample should show and how to record it: ``dropkin predict``."""
