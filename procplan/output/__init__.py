"""What a result becomes for people and other programs: summary text and JSON, the batch-plan sheet."""
