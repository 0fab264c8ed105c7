"""dropkin: neck and contact radius of merging and spreading drops, and their scaling regime."""
