// Draws every chart on the page with vega-embed (served by this service) and wires the SVG / PNG
// download buttons to the chart's own view. A chart that fails says so in place and logs the error.
(function () {
  'use strict';
  function save(url, name) {
    var a = document.createElement('a');
    a.href = url;
    a.download = name;
    document.body.appendChild(a);
    a.click();
    a.remove();
  }
  function draw(figure) {
    var holder = figure.querySelector('script[type="application/json"]');
    var target = figure.querySelector('.vis');
    if (!holder || !target) return;
    var spec = JSON.parse(holder.textContent);
    window
      .vegaEmbed(target, spec, { actions: false, renderer: 'svg' })
      .then(function (result) {
        figure.setAttribute('data-rendered', 'true');
        figure.querySelectorAll('button[data-export]').forEach(function (button) {
          button.disabled = false;
          button.addEventListener('click', function () {
            var type = button.getAttribute('data-export');
            result.view
              .toImageURL(type, type === 'png' ? 2 : 1)
              .then(function (url) {
                save(url, (figure.getAttribute('data-name') || 'chart') + '.' + type);
              })
              .catch(function (error) {
                console.error('chart export failed', error);
              });
          });
        });
      })
      .catch(function (error) {
        figure.setAttribute('data-rendered', 'error');
        target.textContent = 'This chart could not be drawn: ' + error.message + '. The data table below holds the same values.';
        console.error('chart failed', error);
      });
  }
  function start() {
    if (typeof window.vegaEmbed !== 'function') {
      console.error('chart bundles did not load');
      return;
    }
    document.querySelectorAll('figure[data-chart]').forEach(draw);
  }
  if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', start);
  else start();
})();
