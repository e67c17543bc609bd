"""What users see: the terminal sheets and the printed sheet."""
