% problem: Pelletier 62
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(pel62_goal, conjecture,
    (! [X] : ((p(a) & (p(X) => p(f(X)))) => p(f(f(X))))) <=> (! [X] : ((~p(a) | p(X) | p(f(f(X)))) & (~p(a) | ~p(f(X)) | p(f(f(X))))))).
