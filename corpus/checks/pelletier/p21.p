% problem: Pelletier 21
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ? [X] : (p => f(X))).

fof(h2, axiom,
    ? [X] : (f(X) => p)).

fof(pel21_goal, conjecture,
    ? [X] : (p <=> f(X))).
