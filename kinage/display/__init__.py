"""Display below the stages, knowing none of them: the result display protocol (:mod:`.protocol`), the figure
style (:mod:`.style`) and the rules for printed numbers (:mod:`.numbers`)."""
