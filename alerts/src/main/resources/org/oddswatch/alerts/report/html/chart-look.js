/* oddswatch pages: the chart look both pages share (no animation, the page's ink, grid and font). */
Chart.defaults.animation = false;
Chart.defaults.maintainAspectRatio = false;
Chart.defaults.color = '#22313b';
Chart.defaults.borderColor = '#ebe6dc';
Chart.defaults.font.family = 'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", sans-serif';
Chart.defaults.font.size = 12;
