% problem: Pelletier 29
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    (? [X] : f(X)) & (? [X] : g(X))).

fof(pel29_goal, conjecture,
    ((! [X] : (f(X) => h(X))) & (! [X] : (g(X) => j(X)))) <=> (! [X, Y] : ((f(X) & g(Y)) => (h(X) & j(Y))))).
