% problem: Pelletier 51
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    ? [Z, W] : ! [X, Y] : (f(X, Y) <=> (X = Z & Y = W))).

fof(pel51_goal, conjecture,
    ? [Z] : ! [X] : ((? [W] : ! [Y] : (f(X, Y) <=> Y = W)) <=> X = Z)).
