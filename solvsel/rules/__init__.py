"""The rules layer: regulations applied to a substance, a use and a food category; GHS hazard
classes; the cautions shown beside a choice.  Imports the science and data layers only."""
