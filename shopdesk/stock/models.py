"""Parts and oils in stock, and the ledger of stock movements (built with the bench's records)."""
