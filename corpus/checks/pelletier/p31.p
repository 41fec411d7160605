% problem: Pelletier 31
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ~ (? [X] : (f(X) & (g(X) | h(X))))).

fof(h2, axiom,
    ? [X] : (i(X) & f(X))).

fof(h3, axiom,
    ! [X] : (~h(X) => j(X))).

fof(pel31_goal, conjecture,
    ? [X] : (i(X) & j(X))).
