"""The stock plan's words for walkmath's band rules (the rule names themselves come from walkmath.checks).

A rule the engine adds later and this table does not know reads as its own name.
"""

# Form choices: what happens to demand the stock cannot meet, and to stock beyond capacity.
BELOW_CHOICE = {
    "backorder": "Backordered: owed and served from later deliveries (the stock goes below the floor)",
    "lost": "Lost sales: the demand is lost and the stock stays at the floor",
    "stop": "Count the first stock-out only (figures stop at it)",
}
ABOVE_CHOICE = {
    "spill": "Spilled or turned away: the stock stays at capacity",
    "stop": "Count the first overflow only (figures stop at it)",
}
# The same in a few words, for the plan summary above the results.
BELOW_SHORT = {"backorder": "backordered", "lost": "lost", "stop": "first stock-out counted"}
ABOVE_SHORT = {"spill": "spilled or turned away", "stop": "first overflow counted"}
