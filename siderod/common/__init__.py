"""What every layer shares: records (`model`), the error tree (`errors`), the injectable clock."""
