addEventListener("beforeprint",function(){document.querySelectorAll("details").forEach(function(d){d.open=true})});
