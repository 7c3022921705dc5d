"""What the notebook shows: the panel, its figures, the table, and the mask write-back."""
