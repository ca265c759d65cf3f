"""Results, figures and reports."""
